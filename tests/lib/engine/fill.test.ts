import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { cellBits, cloneTable, countColumns, interchangeToTable, keyToColumn, NONE } from '../../../src/lib/engine/model';
import { analyzeTable } from '../../../src/lib/engine/analyze';
import { fillOutputs } from '../../../src/lib/engine/fill';
import { settle } from '../../../src/lib/engine/settle';
import { arbitraryAnalysisTable, loadCheckTable } from '../../support/analysis-tables';

describe('fillOutputs', () => {
  // Source: check-data README, gated latch worked example (Mano and Ciletti, Digital Design, encoded
  // from memory): 12 single-input changes start from stable cells; in 8 of them Q is the same before
  // and after, so the transient cell must take that value; in the other 4 it may stay a don't-care.
  it('gated latch: assigns the 8 transient cells between equal values and leaves the other 4 open', () => {
    const t = loadCheckTable('gated-latch');
    const { table, assignments, conflicts } = fillOutputs(t);
    expect(conflicts).toEqual([]);
    expect(assignments.map((a) => `${a.state}@${a.inputs}=${a.value}`).sort()).toEqual(
      // from a@01 G falls via (a,00) to c (Q 0); from c@00 via (c,10) to d and via (c,01) to a (Q 0);
      // from b@11 G falls via (b,10) to e (Q 1); from e@10 via (e,00) to f and via (e,11) to b (Q 1);
      // from d@10 via (d,00) to c (Q 0); from f@00 via (f,10) to e (Q 1)
      ['a@00=0', 'b@10=1', 'c@01=0', 'c@10=0', 'd@00=0', 'e@00=1', 'e@11=1', 'f@10=1'],
    );
    const cols = countColumns(2);
    // the four changes between different values: a@01 -> 11, b@11 -> 01, d@10 -> 11, f@00 -> 01
    for (const [s, k] of [['a', '11'], ['b', '01'], ['d', '11'], ['f', '01']] as const) {
      expect(cellBits(table, t.states.indexOf(s) * cols + keyToColumn(k))).toBe('-');
    }
    expect(analyzeTable(table).findings.filter((f) => f.code === 'output-hazard')).toEqual([]);
  });

  it('reports changes that glitch whatever fill does, and never touches specified values', () => {
    // Invented example: a lamp whose transient cell is specified the wrong way round.
    const t = interchangeToTable({
      format: 'quiesce-flow-table',
      version: 1,
      name: 'lamp',
      inputs: ['button'],
      outputs: ['lamp', 'beep'],
      states: ['off', 'warm', 'on'],
      reset: 'off',
      rows: { off: { '0': 'off/00', '1': 'warm/1-' }, warm: { '1': 'on/--' }, on: { '1': 'on/0-', '0': 'off/-1' } },
    });
    const { table, assignments, conflicts } = fillOutputs(t);
    expect(conflicts).toMatchObject([{ state: 'off', from: '0', inputs: '1', output: 'lamp' }]);
    expect(conflicts[0]!.reason).toContain('0, 1, 0');
    // lamp from on@1 (0) as the button is released: (on, 0) is open between 0 and 0, so it takes 0;
    // (warm, 1) heads to lamp 0 right after a specified 1, so either value changes lamp once there: left open;
    // beep after off@0 (0) stays open up to on@1, which leaves it open too: there is no value to copy
    expect(assignments).toEqual([{ state: 'on', inputs: '0', output: 'lamp', value: 0 }]);
    expect(cellBits(table, 1 * 2 + 1)).toBe('--');
    const glitches = analyzeTable(table).findings.filter((f) => f.code === 'output-glitch');
    expect(glitches.map((g) => `${g.state}@${g.from}>${g.inputs}:${g.output}`)).toEqual(['off@0>1:lamp']);
  });

  it('fills a chain of two open cells between different values so the output changes once', () => {
    // Invented example: a two-step wake-up; open cells at (rest, 1) and (wake, 1) between 0 and 1
    const t = interchangeToTable({
      format: 'quiesce-flow-table',
      version: 1,
      name: 'wake',
      inputs: ['sensor'],
      outputs: ['fan'],
      states: ['rest', 'wake', 'run'],
      reset: 'rest',
      rows: { rest: { '0': 'rest/0', '1': 'wake/-' }, wake: { '1': 'run/-' }, run: { '1': 'run/1', '0': 'rest/-' } },
    });
    const { assignments } = fillOutputs(t);
    // (rest, 1) sits between 0 and the value 1 it heads to: left open; (wake, 1) follows an open cell: takes 1.
    // (run, 0) sits between 1 and 0 right before the stable end: left open.
    expect(assignments.map((a) => `${a.state}@${a.inputs}=${a.value}`)).toEqual(['wake@1=1']);
  });
});

describe('fillOutputs on random tables', () => {
  it('adds no glitch: filled output-glitch findings are exactly the conflicts, and no hazard remains', () => {
    fc.assert(
      fc.property(arbitraryAnalysisTable(), (t) => {
        const { table, assignments, conflicts } = fillOutputs(t);
        const a = analyzeTable(table, { limit: 100000 });
        const glitches = a.findings.filter((f) => f.code === 'output-glitch').map((f) => `${f.state}@${f.from}>${f.inputs}:${f.output}`);
        expect(new Set(glitches)).toEqual(new Set(conflicts.map((c) => `${c.state}@${c.from}>${c.inputs}:${c.output}`)));
        expect(a.findings.filter((f) => f.code === 'output-hazard')).toEqual([]);
        // specified values unchanged, next states unchanged, stable cells untouched
        const cols = countColumns(t.inputs.length);
        for (let x = 0; x < t.next.length; x++) {
          expect(table.next[x]).toBe(t.next[x]);
          expect(table.outCare[x]! & t.outCare[x]!).toBe(t.outCare[x]);
          expect(table.outValue[x]! & t.outCare[x]!).toBe(t.outValue[x]! & t.outCare[x]!);
          if (t.next[x] === Math.floor(x / cols) || t.next[x] === NONE) expect(table.outCare[x]).toBe(t.outCare[x]);
        }
        expect(assignments.length).toBe(
          [...table.outCare].reduce((sum, care, x) => sum + popcount(care ^ t.outCare[x]!), 0),
        );
        // filling again changes nothing
        expect(fillOutputs(table).assignments).toEqual([]);
      }),
      { numRuns: 300, seed: 0x5eed },
    );
  });

  it('leaves open only cells where any value is safe', () => {
    // Realize every remaining don't-care on a settle path that heads to a specified value at random:
    // the glitches must still be exactly the conflicts.
    fc.assert(
      fc.property(arbitraryAnalysisTable(), fc.infiniteStream(fc.boolean()), (t, coins) => {
        const { table, conflicts } = fillOutputs(t);
        const realized = cloneTable(table);
        const cols = countColumns(t.inputs.length);
        const it = coins[Symbol.iterator]();
        for (let x = 0; x < t.next.length; x++) {
          const s = Math.floor(x / cols);
          if (t.next[x] === NONE || t.next[x] === s) continue;
          const r = settle(t, s, x % cols);
          if (r.kind !== 'stable') continue;
          for (let o = 0; o < t.outputs.length; o++) {
            if ((realized.outCare[x]! >>> o) & 1) continue;
            const headsToValue = r.path.some((p) => (t.outCare[p * cols + (x % cols)]! >>> o) & 1);
            if (!headsToValue) continue;
            realized.outCare[x] = (realized.outCare[x]! | (1 << o)) >>> 0;
            if (it.next().value) realized.outValue[x] = (realized.outValue[x]! | (1 << o)) >>> 0;
          }
        }
        const glitches = analyzeTable(realized, { limit: 100000 })
          .findings.filter((f) => f.code === 'output-glitch')
          .map((f) => `${f.state}@${f.from}>${f.inputs}:${f.output}`);
        expect(new Set(glitches)).toEqual(new Set(conflicts.map((c) => `${c.state}@${c.from}>${c.inputs}:${c.output}`)));
      }),
      { numRuns: 300, seed: 0x5eed },
    );
  });
});

function popcount(x: number): number {
  let c = 0;
  for (; x; x &= x - 1) c++;
  return c;
}
