/** Minimum closed covers: exactness against exhaustive search, budgets, heuristics, determinism. */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { parseKiss2 } from '../../../../src/lib/engine/formats/kiss2';
import { findGreedyCover, findMinimumCover, findPrimeCompatibles, minimizeTable, verifyReduction } from '../../../../src/lib/engine/minimize/index';
import { buildImplicationChart } from '../../../../src/lib/engine/minimize/implication-chart';
import { findClosedPartition } from '../../../../src/lib/engine/minimize/partition';
import { arbitraryTable } from '../../../support/arbitrary-table';
import { KISS2_DIR } from '../../../support/check-data';
import { allCompatibles, bruteMinimumCoverSize, brutePrimes, isClosedCover, naiveCompatibility } from '../../../support/minimize-oracle';

// MCNC/LGSynth'91 benchmark set (check-data/kiss2); ex3 reduces from 10 to 4 states
// (README sources R: Rho, Hachtel, Somenzi and Jacoby 1994, from memory; C: independent exact computation)
const EX3 = parseKiss2(readFileSync(join(KISS2_DIR, 'ex3.kiss2'), 'utf8'), { name: 'ex3' });

const small = (maxStates: number) => arbitraryTable({ maxStates, maxInputs: 2, hostileNames: false, extras: false, unspecified: 0.5 });

describe('findMinimumCover', () => {
  it('finds the minimum among all compatibles (exhaustive search, up to 5 states)', () => {
    fc.assert(
      fc.property(small(5), (t) => {
        const ok = naiveCompatibility(t);
        const r = minimizeTable(t, { timeBudgetMs: 60_000 });
        expect(r.exact).toBe(true);
        expect(r.classes.length).toBe(bruteMinimumCoverSize(t, ok, allCompatibles(ok)));
      }),
      { numRuns: 120 },
    );
  });

  it('finds the minimum among the prime compatibles (exhaustive search, up to 7 states)', () => {
    fc.assert(
      fc.property(small(7), (t) => {
        const ok = naiveCompatibility(t);
        const r = minimizeTable(t, { timeBudgetMs: 60_000 });
        expect(r.exact).toBe(true);
        expect(r.classes.length).toBe(bruteMinimumCoverSize(t, ok, brutePrimes(t, ok)));
        expect(isClosedCover(t, ok, r.classes)).toBe(true);
      }),
      { numRuns: 80 },
    );
  });

  it('works from a plain candidate list', () => {
    const primes = findPrimeCompatibles(EX3).primes;
    const r = findMinimumCover(EX3.states.length, primes, { timeBudgetMs: 60_000 });
    expect(r.exact).toBe(true);
    expect(r.classes).toHaveLength(4);
    expect(r.chosen.map((i) => primes[i]!.states)).toEqual(r.classes);
    expect(isClosedCover(EX3, naiveCompatibility(EX3), r.classes)).toBe(true);
  });

  it('returns the best cover so far, marked inexact, when the node budget runs out', () => {
    const r = minimizeTable(EX3, { nodeBudget: 1, timeBudgetMs: 60_000 });
    expect(r.exact).toBe(false);
    expect(r.stats.method).toBe('budget');
    expect(r.classes.length).toBeGreaterThanOrEqual(4);
    expect(r.classes.length).toBeLessThanOrEqual(EX3.states.length);
    expect(verifyReduction(EX3, r.table, r.classes)).toEqual([]);
    expect(isClosedCover(EX3, naiveCompatibility(EX3), r.classes)).toBe(true);
  });

  it('falls back to a heuristic cover when the compatibles are too many to list', () => {
    const r = minimizeTable(EX3, { primeLimit: 5, timeBudgetMs: 60_000 });
    expect(r.stats.method).toBe('heuristic');
    expect(r.exact).toBe(false);
    expect(isClosedCover(EX3, naiveCompatibility(EX3), r.classes)).toBe(true);
    const m = minimizeTable(EX3, { maximalLimit: 2, timeBudgetMs: 60_000 });
    expect(m.maximalComplete).toBe(false);
    expect(m.exact).toBe(false);
    expect(isClosedCover(EX3, naiveCompatibility(EX3), m.classes)).toBe(true);
  });

  it('is deterministic: the same table gives the same classes', () => {
    fc.assert(
      fc.property(small(8), (t) => {
        expect(minimizeTable(t).classes).toEqual(minimizeTable(t).classes);
      }),
      { numRuns: 60 },
    );
  });
});

describe('heuristic covers', () => {
  it('the greedy cover over prime compatibles is closed', () => {
    fc.assert(
      fc.property(small(8), (t) => {
        const cover = findGreedyCover(t.states.length, findPrimeCompatibles(t).primes);
        expect(cover).toBeDefined();
        expect(isClosedCover(t, naiveCompatibility(t), cover!)).toBe(true);
      }),
      { numRuns: 100 },
    );
  });

  it('the merge heuristic gives a closed partition', () => {
    fc.assert(
      fc.property(small(8), (t) => {
        const p = findClosedPartition(t, buildImplicationChart(t));
        expect(p.flat().sort((a, b) => a - b)).toEqual(t.states.map((_, i) => i));
        expect(isClosedCover(t, naiveCompatibility(t), p)).toBe(true);
      }),
      { numRuns: 100 },
    );
  });
});
