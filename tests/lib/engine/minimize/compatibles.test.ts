/** Maximal and prime compatibles and class sets, against exhaustive enumeration on small tables. */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { interchangeToTable } from '../../../../src/lib/engine/model';
import { buildImplicationChart, findClassSet, findMaximalCompatibles, findPrimeCompatibles } from '../../../../src/lib/engine/minimize/index';
import { arbitraryTable } from '../../../support/arbitrary-table';
import { allCompatibles, brutePrimes, classSetOf, naiveCompatibility } from '../../../support/minimize-oracle';

const key = (s: readonly number[]) => s.join(',');
const sortedKeys = (sets: readonly (readonly number[])[]) => sets.map(key).sort();

/** Maximal elements of a family of sets (exhaustive). */
function maximalOf(sets: number[][]): number[][] {
  return sets.filter((a) => !sets.some((b) => b.length > a.length && a.every((x) => b.includes(x))));
}

// Invented: a press-control table whose four states are all compatible, and whose
// merged row implies nothing outside itself, so one class is enough.
const ALL_ONE = interchangeToTable({
  format: 'quiesce-flow-table',
  version: 1,
  name: 'two_hand',
  inputs: ['left', 'right'],
  outputs: ['press'],
  states: ['rest', 'left_down', 'right_down', 'both'],
  reset: 'rest',
  rows: {
    rest: { '00': 'rest/0', '10': 'left_down/-' },
    left_down: { '10': 'left_down/0', '11': 'both/-' },
    right_down: { '01': 'right_down/0', '11': 'both/-' },
    both: { '11': 'both/1', '00': 'rest/-' },
  },
});

describe('compatibles', () => {
  it('finds one maximal compatible holding every state when all pairs are compatible', () => {
    const chart = buildImplicationChart(ALL_ONE);
    expect(chart.compatiblePairs).toBe(6);
    expect(findMaximalCompatibles(chart).sets).toEqual([[0, 1, 2, 3]]);
    const p = findPrimeCompatibles(ALL_ONE);
    expect(p.complete).toBe(true);
    // its class set is empty, so it excludes every subset: it is the only prime
    expect(p.primes).toEqual([{ states: [0, 1, 2, 3], classSet: [] }]);
  });

  it('computes class sets: implied classes not inside the set, maximal ones only', () => {
    // invented, no outputs (so every pair is compatible); keys are x then y
    const t = interchangeToTable({
      format: 'quiesce-flow-table',
      version: 1,
      name: 'classes',
      inputs: ['x', 'y'],
      outputs: [],
      states: ['p', 'q', 'r', 's'],
      reset: 'p',
      rows: { p: { '00': 'q', '10': 's', '01': 's' }, q: { '00': 'r', '10': 'p', '01': 'p' }, r: { '00': 'r', '10': 'r' }, s: { '00': 's' } },
    });
    // {p,q}: 00 gives {q,r}, 10 and 01 give {p,s}
    expect(findClassSet(t, [0, 1])).toEqual([
      [0, 3],
      [1, 2],
    ]);
    // {p,q,r}: {q,r} lies inside the set; {p,s} (at 01) lies inside {p,r,s} (at 10)
    expect(findClassSet(t, [0, 1, 2])).toEqual([[0, 2, 3]]);
    // {r,s}: 00 gives {r,s} itself, 10 gives {r}
    expect(findClassSet(t, [2, 3])).toEqual([]);
  });

  it('stops at the limit and says so', () => {
    // five pairwise incompatible pairs of states: 2^5 maximal compatibles
    const states = Array.from({ length: 10 }, (_, i) => `s${i}`);
    const rows: Record<string, Record<string, string>> = {};
    states.forEach((s, i) => (rows[s] = { '0': `${s}/${i % 2}` }));
    const t = interchangeToTable({ format: 'quiesce-flow-table', version: 1, name: 'wide', inputs: ['x'], outputs: ['y'], states, reset: 's0', rows });
    // states of equal parity are compatible (the others conflict on y): two maximal compatibles
    expect(findMaximalCompatibles(buildImplicationChart(t)).sets).toEqual([
      [0, 2, 4, 6, 8],
      [1, 3, 5, 7, 9],
    ]);
    expect(findMaximalCompatibles(buildImplicationChart(t), { limit: 1 })).toEqual({ sets: [[0, 2, 4, 6, 8]], complete: false });
  });

  it('maximal compatibles equal the maximal sets among all compatibles (random tables)', () => {
    fc.assert(
      fc.property(arbitraryTable({ maxStates: 9, maxInputs: 3, hostileNames: false, extras: false }), (t) => {
        const ok = naiveCompatibility(t);
        const got = findMaximalCompatibles(buildImplicationChart(t));
        expect(got.complete).toBe(true);
        expect(got.sets.map(key)).toEqual(sortedKeys(maximalOf(allCompatibles(ok))).sort((a, b) => compareKeys(a, b)));
      }),
      { numRuns: 150 },
    );
  });

  it('prime compatibles equal the definition applied to every compatible (random tables)', () => {
    fc.assert(
      fc.property(arbitraryTable({ maxStates: 8, maxInputs: 3, hostileNames: false, extras: false, unspecified: 0.5 }), (t) => {
        const ok = naiveCompatibility(t);
        const got = findPrimeCompatibles(t);
        expect(got.complete).toBe(true);
        expect(sortedKeys(got.primes.map((p) => p.states))).toEqual(sortedKeys(brutePrimes(t, ok)));
        for (const p of got.primes) {
          // every reported class is a class-set member, and every class-set member lies in a reported one
          const full = classSetOf(t, p.states);
          for (const d of p.classSet) expect(full.map(key)).toContain(key(d));
          for (const d of full) expect(p.classSet.some((e) => d.every((x) => e.includes(x)))).toBe(true);
        }
      }),
      { numRuns: 150 },
    );
  });
});

/** Orders "1,2,3"-style keys as their number lists, lexicographically. */
function compareKeys(a: string, b: string): number {
  const x = a.split(',').map(Number);
  const y = b.split(',').map(Number);
  for (let i = 0; i < Math.min(x.length, y.length); i++) if (x[i] !== y[i]) return x[i]! - y[i]!;
  return x.length - y.length;
}
