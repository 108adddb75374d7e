/**
 * The gated (D) latch worked example of check-data/README.md: the primitive flow table of the
 * gated-latch design example in Mano and Ciletti, "Digital Design" (textbook), chapter on
 * asynchronous sequential circuits, encoded from memory and from secondary write-ups.
 * Known results (README): 2 rows by merging (a, c, d) and (b, e, f); 7 compatible pairs;
 * maximal compatibles {a, b}, {a, c, d}, {b, e, f}.
 */
import { describe, expect, it } from 'vitest';
import { tableToInterchange } from '../../../../src/lib/engine/model';
import { buildImplicationChart, findMaximalCompatibles, minimizeTable, verifyReduction } from '../../../../src/lib/engine/minimize/index';
import { gatedLatchTable } from '../../../support/worked-examples';

/** The README's table, inputs D G, output Q, outputs only in stable cells. */
const LATCH = gatedLatchTable();

const names = (sets: number[][]) => sets.map((s) => s.map((i) => LATCH.states[i]).join(''));

describe('gated latch (check-data/README.md worked example, textbook, encoded from memory)', () => {
  it('has 7 compatible pairs', () => {
    expect(buildImplicationChart(LATCH).compatiblePairs).toBe(7);
  });

  it('has the maximal compatibles {a,b}, {a,c,d}, {b,e,f}', () => {
    const m = findMaximalCompatibles(buildImplicationChart(LATCH));
    expect(m.complete).toBe(true);
    expect(names(m.sets)).toEqual(['ab', 'acd', 'bef']);
  });

  it('reduces to 2 rows with classes {a,c,d} and {b,e,f}', () => {
    const r = minimizeTable(LATCH);
    expect(r.exact).toBe(true);
    expect(names(r.classes)).toEqual(['acd', 'bef']);
    expect(r.table.states).toEqual(['a+c+d', 'b+e+f']);
    expect(r.table.states[r.table.reset]).toBe('a+c+d');
    expect(verifyReduction(LATCH, r.table, r.classes)).toEqual([]);
  });

  it('gives the reduced latch: each row holds its output in its stable cells', () => {
    // merged outputs: (a,c,d) stores Q = 0, (b,e,f) stores Q = 1 (common practice, no source)
    const doc = tableToInterchange(minimizeTable(LATCH).table);
    expect(doc.rows).toEqual({
      'a+c+d': { '00': 'a+c+d/0', '01': 'a+c+d/0', '11': 'b+e+f/-', '10': 'a+c+d/0' },
      'b+e+f': { '00': 'b+e+f/1', '01': 'a+c+d/-', '11': 'b+e+f/1', '10': 'b+e+f/1' },
    });
  });
});
