/** The implication chart: reasons, implied pairs, and agreement with a slow reference sweep. */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { interchangeToTable, type FlowTable } from '../../../../src/lib/engine/model';
import { buildImplicationChart, pairIndex } from '../../../../src/lib/engine/minimize/index';
import { arbitraryTable } from '../../../support/arbitrary-table';
import { countCompatiblePairs, naiveCompatibility } from '../../../support/minimize-oracle';

// A small invented table (a jog-wheel style debouncer) built so that each kind of chart entry appears.
const T = interchangeToTable({
  format: 'quiesce-flow-table',
  version: 1,
  name: 'jog_debounce',
  inputs: ['phase', 'press'],
  outputs: ['step', 'click'],
  states: ['idle', 'armed', 'held', 'spin', 'lost'],
  reset: 'idle',
  rows: {
    idle: { '00': 'idle/00', '10': 'armed/0-', '01': 'held/--' },
    armed: { '00': 'idle/-0', '10': 'armed/00', '11': 'spin/1-' },
    held: { '00': 'idle/0-', '01': 'held/-1', '11': 'spin/--' },
    spin: { '11': 'spin/10', '10': 'lost/--' },
    lost: { '10': 'lost/11', '11': 'spin/-1' },
  },
});
const S = (name: string) => T.states.indexOf(name);

describe('buildImplicationChart', () => {
  const chart = buildImplicationChart(T);

  it('indexes pairs compactly, n(n-1)/2 entries', () => {
    expect(chart.status).toHaveLength(10);
    expect(pairIndex(0, 1)).toBe(0);
    expect(pairIndex(3, 1)).toBe(pairIndex(1, 3));
    expect(new Set([0, 1, 2, 3, 4].flatMap((j) => [0, 1, 2, 3, 4].filter((i) => i < j).map((i) => pairIndex(i, j)))).size).toBe(10);
  });

  it('names the column and output of an output conflict', () => {
    // spin gives click = 0 at 11, lost gives click = 1 at 11
    expect(chart.reasonOf(S('spin'), S('lost'))).toEqual({ kind: 'outputs', inputs: '11', output: 'click' });
    expect(chart.isCompatible(S('lost'), S('spin'))).toBe(false);
  });

  it('names the implied incompatible pair and the column that implies it', () => {
    // armed and lost conflict on step at 10 (0 against 1)
    expect(chart.reasonOf(S('armed'), S('lost'))).toEqual({ kind: 'outputs', inputs: '10', output: 'step' });
    // armed and spin agree on outputs, but at 10 they go to armed and lost
    expect(chart.reasonOf(S('armed'), S('spin'))).toEqual({ kind: 'implied', via: [S('armed'), S('lost')], inputs: '10' });
  });

  it('lists implied pairs, each with the column that implies it', () => {
    // idle and armed: both go to idle at 00 and to armed at 10, so nothing is implied
    expect(chart.isCompatible(S('idle'), S('armed'))).toBe(true);
    expect(chart.reasonOf(S('idle'), S('armed'))).toBeUndefined();
    expect(chart.impliedPairsOf(S('idle'), S('armed'))).toEqual([]);
    expect(chart.isCompatible(S('idle'), S('held'))).toBe(true);
    expect(chart.isCompatible(S('armed'), S('held'))).toBe(true);
    // idle and spin: at 10 they go to armed and lost, an incompatible pair
    expect(chart.impliedPairsOf(S('idle'), S('spin'))).toEqual([{ pair: [S('armed'), S('lost')], inputs: '10' }]);
    expect(chart.isCompatible(S('idle'), S('spin'))).toBe(false);
  });

  it('lists every pair once, row by row, as the triangle is drawn', () => {
    const e = chart.entries();
    expect(e.map((x) => x.pair)).toEqual([
      [0, 1],
      [0, 2],
      [1, 2],
      [0, 3],
      [1, 3],
      [2, 3],
      [0, 4],
      [1, 4],
      [2, 4],
      [3, 4],
    ]);
    expect(e.filter((x) => x.compatible).length).toBe(chart.compatiblePairs);
    for (const x of e) expect(x.compatible).toBe(x.reason === undefined);
  });

  it('treats a state as compatible with itself', () => {
    expect(chart.isCompatible(2, 2)).toBe(true);
    expect(chart.reasonOf(2, 2)).toBeUndefined();
  });

  it('agrees with a slow reference sweep on random tables, and every reason checks out', () => {
    fc.assert(
      fc.property(arbitraryTable({ maxStates: 9, maxInputs: 3, hostileNames: false, extras: false }), (t: FlowTable) => {
        const chart = buildImplicationChart(t);
        const ok = naiveCompatibility(t);
        expect(chart.compatiblePairs).toBe(countCompatiblePairs(ok));
        const n = t.states.length;
        for (let j = 1; j < n; j++) {
          for (let i = 0; i < j; i++) {
            expect(chart.isCompatible(i, j)).toBe(ok[i]![j]);
            const r = chart.reasonOf(i, j);
            if (!r) continue;
            const cols = 1 << t.inputs.length;
            const c = [...r.inputs].reduce((acc, ch, k) => acc | (ch === '1' ? 1 << k : 0), 0);
            if (r.kind === 'outputs') {
              const k = t.outputs.indexOf(r.output);
              const a = i * cols + c;
              const b = j * cols + c;
              expect((t.outCare[a]! >> k) & (t.outCare[b]! >> k) & 1).toBe(1);
              expect(((t.outValue[a]! ^ t.outValue[b]!) >> k) & 1).toBe(1);
            } else {
              const nx = [t.next[i * cols + c]!, t.next[j * cols + c]!].sort((x, y) => x - y);
              expect(nx).toEqual(r.via);
              expect(ok[r.via[0]]![r.via[1]]).toBe(false);
            }
          }
        }
      }),
      { numRuns: 150 },
    );
  });
});
