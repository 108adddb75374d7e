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

// module-local copy: imported bindings can compile to getter calls, which hot loops should not pay for
const L_NONE: number = NONE;

/**
 * Every cell settled, indexed like `FlowTable.next`. `term` is the cell where settling ends: the
 * stable cell, the unspecified cell, or for an oscillation the cycle's cell with the lowest state
 * index (so one cycle has one `term`, which dedupes oscillations).
 *
 * The output summaries describe the settle path from a cell to its stable end (only where
 * `fault` is SETTLE_OK), with don't-cares dropped, as bit masks over the outputs:
 * `firstCare`/`firstValue`: whether some cell on the path specifies the output, and the first such
 * value (this is also the value a backward fill gives the cell); `once`/`twice`: the specified
 * values change at least once / at least twice along the path; `risk`: some don't-care transient
 * cell strictly after this one could add a change (see `computeEntryRisk` in reachability.ts).
 * They are empty arrays when not asked for or when the table has no outputs.
 */
export interface SettledCells extends SettledTable {
  columns: number;
  term: Int32Array;
  firstCare: Uint32Array;
  firstValue: Uint32Array;
  once: Uint32Array;
  twice: Uint32Array;
  risk: Uint32Array;
}

const EMPTY_U32 = new Uint32Array(0);

/**
 * Settles every cell, and with `summarize` also the output summaries of each settle path, in time
 * linear in the table size: each column is a functional graph, so one memoized walk per cell is
 * enough. Walking column by column keeps the walk marks in a small per-state array (measured
 * several times faster than row-by-row walking with per-cell marks on a 1024 x 1024 table).
 */
export function settleColumns(t: FlowTable, summarize: boolean): SettledCells {
  const inputCount = t.inputs.length;
  const cols = countColumns(inputCount);
  const n = t.states.length;
  const size = n * cols;
  const next = t.next;
  const outCare = t.outCare;
  const outValue = t.outValue;
  const withOutputs = summarize && t.outputs.length > 0;
  const term = new Int32Array(size);
  const fault = new Uint8Array(size);
  const state = new Int16Array(size);
  const firstCare = withOutputs ? new Uint32Array(size) : EMPTY_U32;
  const firstValue = withOutputs ? new Uint32Array(size) : EMPTY_U32;
  const once = withOutputs ? new Uint32Array(size) : EMPTY_U32;
  const twice = withOutputs ? new Uint32Array(size) : EMPTY_U32;
  const risk = withOutputs ? new Uint32Array(size) : EMPTY_U32;
  // per state, within one column: 0 unvisited, 1 on the current walk, 2 done
  const mark = new Uint8Array(n);
  const pos = new Int32Array(n);
  const stack = new Int32Array(n + 1);
  for (let c = 0; c < cols; c++) {
    mark.fill(0);
    for (let s0 = 0; s0 < n; s0++) {
      if (mark[s0] === 2) continue;
      let depth = 0;
      let s = s0;
      let resTerm = 0;
      let resFault = SETTLE_OK;
      for (;;) {
        const m = mark[s]!;
        if (m === 2) {
          const cell = (s << inputCount) | c;
          resTerm = term[cell]!;
          resFault = fault[cell]!;
          break;
        }
        if (m === 1) {
          // a loop from s to the top of the stack: name it by its lowest state
          let lo = s;
          for (let i = pos[s]!; i < depth; i++) if (stack[i]! < lo) lo = stack[i]!;
          resTerm = (lo << inputCount) | c;
          resFault = SETTLE_OSCILLATION;
          break;
        }
        mark[s] = 1;
        pos[s] = depth;
        stack[depth++] = s;
        const cell = (s << inputCount) | c;
        const nx = next[cell]!;
        if (nx === L_NONE) {
          resTerm = cell;
          resFault = SETTLE_UNSPECIFIED;
          break;
        }
        if (nx === s) {
          resTerm = cell;
          break;
        }
        s = nx;
      }
      const resState = resFault === SETTLE_OK ? resTerm >> inputCount : L_NONE;
      // deepest first, so each cell's successor is summarized before it
      for (let i = depth - 1; i >= 0; i--) {
        const v = stack[i]!;
        const cell = (v << inputCount) | c;
        mark[v] = 2;
        term[cell] = resTerm;
        fault[cell] = resFault;
        state[cell] = resState;
        if (resFault !== SETTLE_OK || !withOutputs) continue;
        const care = outCare[cell]!;
        const val = outValue[cell]! & care;
        const nx = next[cell]!;
        if (nx === v) {
          firstCare[cell] = care;
          firstValue[cell] = val;
          continue;
        }
        const y = (nx << inputCount) | c;
        const fc = firstCare[y]!;
        const fv = firstValue[y]!;
        const d = care & fc & (val ^ fv);
        const onceY = once[y]!;
        firstCare[cell] = (care | fc) >>> 0;
        const fval = (val | (fv & ~care)) >>> 0;
        firstValue[cell] = fval;
        once[cell] = (onceY | d) >>> 0;
        twice[cell] = (twice[y]! | (d & onceY)) >>> 0;
        // the step cell -> y is risky for outputs y leaves open although it is transient and the
        // value it heads to equals the value before it (a change there would be a second one)
        risk[cell] = (risk[y]! | (next[y] !== nx ? ~outCare[y]! & fc & ~(fval ^ fv) : 0)) >>> 0;
      }
    }
  }
  return { columns: cols, term, fault, state, firstCare, firstValue, once, twice, risk };
}

/** Settles every cell in time linear in the table size (see settleColumns). */
export function settleAll(t: FlowTable): SettledTable {
  const { state, fault } = settleColumns(t, false);
  return { state, fault };
}
