import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { cellBits, columnToKey, countColumns, DOUBLE_CHANGE_POLICIES, FlowTableError, keyToColumn, type FlowTable } from '../../../src/lib/engine/model';
import { createRuntime, powerUp, stepMachine, type EventOutcome } from '../../../src/lib/engine/runtime';
import { simulateTable } from '../../../src/lib/engine/simulate';
import { arbitraryAnalysisTable, loadCheckTable } from '../../support/analysis-tables';

function latch(): FlowTable {
  const t = loadCheckTable('gated-latch');
  t.inputs = ['D', 'G'];
  t.outputs = ['Q'];
  return t;
}

describe('simulateTable', () => {
  // Gated latch worked example (check-data README: Mano and Ciletti, Digital Design, encoded from
  // memory). Behaviour of a gated D latch (common practice, no source): while G is 1, Q follows D;
  // when G falls, Q keeps its value whatever D does.
  it('runs the gated latch as a latch', () => {
    const sim = simulateTable(latch(), ['00', '01', '11', '10', '00', '01', '11', '01']);
    expect(sim.steps.map((s) => `${s.state}:${s.outputs}:${s.fault}`)).toEqual([
      'c:0:none', // power-up D=0 G=0
      'a:0:none', // G rises with D=0: Q=0
      'b:1:none', // D rises while G=1: Q follows, 1
      'e:1:none', // G falls: Q held at 1
      'f:1:none', // D falls while G=0: still 1
      'a:0:none', // G rises with D=0: Q follows, 0
      'b:1:none',
      'a:0:none',
    ]);
    expect(sim.steps[1]!.path.map((p) => `${p.state}@${p.inputs}:${p.kind}:${p.outputs}`)).toEqual(['c@00:start:0', 'c@01:transient:-', 'a@01:stable:0']);
    expect(sim.steps[0]).toMatchObject({ policy: 'power-up', changed: 0 });
    expect(sim.steps[1]).toMatchObject({ policy: 'single', changed: 1 });
  });

  it('holds on faults and shows the failed path', () => {
    // from a at 01, D and G change together to 10: the latch table leaves (a, 10) unspecified
    const guarded = simulateTable(latch(), ['01', '10']);
    expect(guarded.policy).toBe('guarded');
    expect(guarded.steps[1]).toMatchObject({ state: 'a', column: '01', outputs: '0', fault: 'double-change', changed: 2, policy: 'guarded' });
    const direct = simulateTable(latch(), ['01', '10'], { policy: 'direct' });
    expect(direct.steps[1]!.path.at(-1)).toMatchObject({ state: 'a', inputs: '10', kind: 'unspecified' });
    // stepwise flips D first (lowest input index): a -> b at 11, then G falls: b -> e at 10
    const stepwise = simulateTable(latch(), ['01', '10'], { policy: 'stepwise' });
    expect(stepwise.steps[1]).toMatchObject({ state: 'e', outputs: '1', fault: 'none', policy: 'stepwise' });
    expect(stepwise.steps[1]!.path.map((p) => `${p.state}@${p.inputs}:${p.kind}`)).toEqual(['a@01:start', 'a@11:transient', 'b@11:stable', 'b@10:transient', 'e@10:stable']);
    // power-up into the unspecified cell (a, 10): state reset, outputs 0
    expect(simulateTable(latch(), ['10']).steps[0]).toMatchObject({ state: 'a', outputs: '0', fault: 'power-up' });
  });

  it('rejects bad vectors with located errors', () => {
    const t = latch();
    const fail = (v: unknown, policy?: unknown) => {
      try {
        simulateTable(t, v as string[], policy === undefined ? {} : { policy: policy as 'fault' });
      } catch (e) {
        expect(e).toBeInstanceOf(FlowTableError);
        return (e as FlowTableError).issues.map((i) => `${i.where}: ${i.message}`);
      }
      throw new Error('expected a FlowTableError');
    };
    expect(fail(['00', '01', '11', '0a1'])).toEqual(['inputs[3]: "0a1" is not 2 characters of 0 and 1']);
    expect(fail([])).toEqual(['inputs: at least one input vector (the power-up inputs) is needed']);
    expect(fail(['0', 7])).toEqual(['inputs[0]: "0" is not 2 characters of 0 and 1', 'inputs[1]: 7 is not 2 characters of 0 and 1']);
    expect(fail(['00'], 'sometimes')).toEqual(['policy: unknown double-change policy "sometimes"']);
  });
});

describe('simulateTable follows runtime.ts', () => {
  const vectorsArb = (t: FlowTable) => {
    const n = t.inputs.length;
    const cols = countColumns(n);
    // a walk mixing single-input changes and arbitrary vectors (double and multi-bit changes)
    return fc.tuple(
      fc.integer({ min: 0, max: cols - 1 }),
      fc.array(fc.oneof(fc.integer({ min: 0, max: Math.max(0, n - 1) }).map((k) => ({ flip: k })), fc.integer({ min: 0, max: cols - 1 }).map((c) => ({ set: c }))), { maxLength: 30 }),
    );
  };

  it('matches powerUp/stepMachine on random walks for every policy', () => {
    fc.assert(
      fc.property(
        arbitraryAnalysisTable().chain((t) => fc.tuple(fc.constant(t), vectorsArb(t))),
        ([t, [first, moves]]) => {
          const n = t.inputs.length;
          const cols = countColumns(n);
          const columns = [first];
          for (const mv of moves) {
            const prev = columns[columns.length - 1]!;
            columns.push('flip' in mv ? (n ? prev ^ (1 << mv.flip) : prev) : mv.set);
          }
          const vectors = columns.map((c) => columnToKey(c, n));
          const rt = createRuntime(t);
          for (const policy of DOUBLE_CHANGE_POLICIES) {
            const sim = simulateTable(t, vectors, { policy });
            let out: EventOutcome = powerUp(rt, first);
            const expected = [out];
            for (const c of columns.slice(1)) {
              out = stepMachine(rt, out.next, c, policy);
              expected.push(out);
            }
            expect(sim.steps).toHaveLength(expected.length);
            sim.steps.forEach((step, i) => {
              const e = expected[i]!;
              expect(step.state).toBe(t.states[e.next.state]);
              expect(step.column).toBe(columnToKey(e.next.column, n));
              expect(keyToColumn(step.outputs)).toBe(e.next.outputs);
              expect(step.fault).toBe(e.fault);
              expect(step.changed).toBe(e.changed);
              // every path step shows that cell's output bits
              for (const p of step.path) expect(p.outputs).toBe(cellBits(t, t.states.indexOf(p.state) * cols + keyToColumn(p.inputs)));
              const last = step.path.at(-1)!;
              if (e.fault === 'none' && e.changed > 0) expect([last.kind, last.state, last.inputs]).toEqual(['stable', step.state, step.column]);
              if (e.fault === 'unspecified') expect(last.kind).toBe('unspecified');
              if (e.fault === 'oscillation') expect(last.kind).toBe('repeat');
            });
          }
        },
      ),
      { numRuns: 300, seed: 0x5eed },
    );
  });
});
