import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { createTable, countColumns, NONE } from '../../../src/lib/engine/model';
import { settle, settleAll, SETTLE_OK, SETTLE_OSCILLATION, SETTLE_UNSPECIFIED } from '../../../src/lib/engine/settle';

/** A random next-state array: every cell NONE or a state. */
const arbitraryNext = fc
  .record({ states: fc.integer({ min: 1, max: 7 }), inputs: fc.integer({ min: 0, max: 3 }) })
  .chain(({ states, inputs }) =>
    fc.record({
      states: fc.constant(states),
      inputs: fc.constant(inputs),
      next: fc.array(fc.integer({ min: -1, max: states - 1 }), { minLength: states << inputs, maxLength: states << inputs }),
    }),
  );

describe('settle', () => {
  it('follows a column to its stable state, or names the unspecified cell or the cycle', () => {
    const t = createTable({ name: 't', inputs: ['a'], outputs: [], states: ['s0', 's1', 's2', 's3'] });
    // column 0: s0 -> s1 -> s2 (stable); s3 -> s3. column 1: s0 -> s1 -> s0 loop; s2 -> unspecified
    const set = (s: number, c: number, n: number) => (t.next[s * 2 + c] = n);
    set(0, 0, 1); set(1, 0, 2); set(2, 0, 2); set(3, 0, 3);
    set(0, 1, 1); set(1, 1, 0); set(3, 1, 2);
    expect(settle(t, 0, 0)).toEqual({ kind: 'stable', state: 2, path: [0, 1, 2] });
    expect(settle(t, 0, 1)).toEqual({ kind: 'oscillation', cycle: [0, 1], path: [0, 1, 0] });
    expect(settle(t, 3, 1)).toEqual({ kind: 'unspecified', state: 2, path: [3, 2] });
  });

  it('settleAll agrees with settle on every cell of random tables', () => {
    fc.assert(
      fc.property(arbitraryNext, ({ states, inputs, next }) => {
        const t = createTable({ name: 't', inputs: Array.from({ length: inputs }, (_, i) => `i${i}`), outputs: [], states: Array.from({ length: states }, (_, i) => `s${i}`) });
        t.next.set(next);
        const all = settleAll(t);
        const cols = countColumns(inputs);
        for (let s = 0; s < states; s++)
          for (let c = 0; c < cols; c++) {
            const r = settle(t, s, c);
            const cell = s * cols + c;
            const expected = r.kind === 'stable' ? SETTLE_OK : r.kind === 'unspecified' ? SETTLE_UNSPECIFIED : SETTLE_OSCILLATION;
            expect(all.fault[cell]).toBe(expected);
            expect(all.state[cell]).toBe(r.kind === 'stable' ? r.state : NONE);
          }
      }),
      { numRuns: 300 },
    );
  });
});
