/** Settling: following next states down one column until a stable total state. */
import { countColumns, NONE, type FlowTable } from './model';

/** Outcome of settling from one total state. `path` lists visited states, the start first. */
export type SettleResult =
  | { kind: 'stable'; state: number; path: number[] }
  | { kind: 'unspecified'; state: number; path: number[] }
  | { kind: 'oscillation'; cycle: number[]; path: number[] };

/** Follows next states in `column` from `state` until a stable cell, an unspecified cell or a repeated state. */
export function settle(t: FlowTable, state: number, column: number): SettleResult {
  const cols = countColumns(t.inputs.length);
  const path: number[] = [state];
  const seen = new Set<number>([state]);
  let s = state;
  for (;;) {
    const n = t.next[s * cols + column]!;
    if (n === NONE) return { kind: 'unspecified', state: s, path };
    if (n === s) return { kind: 'stable', state: s, path };
    if (seen.has(n)) return { kind: 'oscillation', cycle: path.slice(path.indexOf(n)), path: [...path, n] };
    seen.add(n);
    path.push(n);
    s = n;
  }
}

/** Settled outcome of every cell, as flat arrays indexed like `FlowTable.next`. */
export interface SettledTable {
  /** Final stable state, or NONE where settling fails. */
  state: Int16Array;
  /** 0 settled, 1 unspecified cell reached, 2 oscillation. */
  fault: Uint8Array;
}

/** Fault codes of `SettledTable.fault`. */
export const SETTLE_OK = 0;
/** Settling reached an unspecified cell. */
export const SETTLE_UNSPECIFIED = 1;
/** Settling looped. */
export const SETTLE_OSCILLATION = 2;

/**
 * Settles every cell in time linear in the table size: each column is a functional graph,
 * so one memoized walk per cell is enough.
 */
export function settleAll(t: FlowTable): SettledTable {
  const cols = countColumns(t.inputs.length);
  const n = t.states.length;
  const state = new Int16Array(n * cols).fill(NONE);
  const fault = new Uint8Array(n * cols);
  // 0 = unvisited, 1 = on the current walk, 2 = done
  const mark = new Uint8Array(n);
  const stack = new Int32Array(n + 1);
  for (let c = 0; c < cols; c++) {
    mark.fill(0);
    for (let s0 = 0; s0 < n; s0++) {
      if (mark[s0] === 2) continue;
      let depth = 0;
      let s = s0;
      let resultState: number = NONE;
      let resultFault = SETTLE_OK;
      for (;;) {
        if (mark[s] === 2) {
          resultState = state[s * cols + c]!;
          resultFault = fault[s * cols + c]!;
          break;
        }
        if (mark[s] === 1) {
          resultFault = SETTLE_OSCILLATION;
          break;
        }
        mark[s] = 1;
        stack[depth++] = s;
        const nx = t.next[s * cols + c]!;
        if (nx === NONE) {
          resultFault = SETTLE_UNSPECIFIED;
          break;
        }
        if (nx === s) {
          resultState = s;
          break;
        }
        s = nx;
      }
      for (let i = 0; i < depth; i++) {
        const v = stack[i]!;
        mark[v] = 2;
        state[v * cols + c] = resultState;
        fault[v * cols + c] = resultFault;
      }
    }
  }
  return { state, fault };
}
