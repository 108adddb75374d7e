import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { settleAll } from '../../../src/lib/engine/settle';
import { createRuntime } from '../../../src/lib/engine/runtime';
import { computeReach, runtimeFromCells, settleCells } from '../../../src/lib/engine/reachability';
import { arbitraryAnalysisTable, loadCheckTable, referenceAnalysis } from '../../support/analysis-tables';

describe('settleCells', () => {
  it('settles every cell exactly like settleAll', () => {
    fc.assert(
      fc.property(arbitraryAnalysisTable({ inputs: 4, states: 8 }), (t) => {
        const cells = settleCells(t);
        const ref = settleAll(t);
        expect([...cells.state]).toEqual([...ref.state]);
        expect([...cells.fault]).toEqual([...ref.fault]);
        const rt = runtimeFromCells(t, cells);
        const plain = createRuntime(t);
        expect([...rt.settled.state]).toEqual([...plain.settled.state]);
        expect(rt.columns).toBe(plain.columns);
      }),
      { numRuns: 300, seed: 0x5eed },
    );
  });

  it('reaches the same stable total states as plain enumeration', () => {
    // MCNC/LGSynth'91 benchmark set: lion, lion9, train11, bbara; compared with the reference enumeration.
    for (const name of ['lion', 'lion9', 'train11', 'bbara']) {
      const t = loadCheckTable(name);
      const reach = computeReach(t);
      const cols = reach.cells.columns;
      const got = new Set([...reach.stableList].map((x) => `${t.states[Math.floor(x / cols)]}@${(x % cols).toString(2).padStart(t.inputs.length, '0').split('').reverse().join('')}`));
      expect(got).toEqual(referenceAnalysis(t).reachableStable);
    }
  });
});
