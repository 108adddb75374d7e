/**
 * The shared core of analysis, fill and tour: every cell settled in one linear pass (with the
 * terminal cell and per-output summaries of the settle path), and the closure of the power-up
 * total states under single-input changes. Everything here is typed arrays; names are only
 * built by the callers, for findings.
 */
import { grayKeys, keyToColumn, NONE, type FlowTable } from './model';
import { settleColumns, SETTLE_OK, type SettledCells, type SettledTable } from './settle';
import type { Runtime } from './runtime';

// module-local copies: imported bindings can compile to getter calls, which hot loops should not pay for
const L_NONE: number = NONE;
const L_SETTLE_OK: number = SETTLE_OK;

export type { SettledCells };

/** Settles every cell and summarizes output changes along each settle path (see settleColumns). */
export function settleCells(t: FlowTable): SettledCells {
  return settleColumns(t, true);
}

/**
 * Risk mask of entering transient cell `e` right after a cell whose outputs are (care0, val0): the
 * outputs that `e` leaves open although its path heads to a value equal to the one before it (or
 * the value before it is open too). Zero when `e` is stable. Pair with `risk[e]` for the rest of
 * the path.
 */
export function computeEntryRisk(t: FlowTable, sc: SettledCells, e: number, care0: number, val0: number): number {
  const stateOfE = (e / sc.columns) | 0;
  if (t.next[e] === stateOfE) return 0;
  return (~t.outCare[e]! & sc.firstCare[e]! & (~care0 | ~(val0 ^ sc.firstValue[e]!))) >>> 0;
}

/** Power-up and single-input-change closure of a table. */
export interface Reach {
  cells: SettledCells;
  inputCount: number;
  /** Per column: the settled power-up state, or L_NONE when power-up fails there. */
  powerUp: Int32Array;
  /** Per cell: 1 when it is a reachable stable total state. */
  reachStable: Uint8Array;
  /** Reachable stable cells, ascending by cell index (state, then column index). */
  stableList: Int32Array;
  /** Per cell: bit 1 visited by a power-up settle path, bit 2 by a single-input-change settle path. */
  onPath: Uint8Array;
  /** Per state: 1 when visited by any power-up or single-input-change path. */
  reachableState: Uint8Array;
}

/** Marks the settle path from `cell` with `flag`, stopping at a cell already marked. */
function markPath(t: FlowTable, cols: number, onPath: Uint8Array, cell: number, flag: number): void {
  const c = cell % cols;
  let x = cell;
  for (;;) {
    if (onPath[x]! & flag) return;
    onPath[x] = onPath[x]! | flag;
    const nx = t.next[x]!;
    const s = (x / cols) | 0;
    if (nx === L_NONE || nx === s) return;
    x = nx * cols + c;
  }
}

/** Computes power-up results and the single-input-change closure (reachable stable total states and visited cells). */
export function computeReach(t: FlowTable, cells: SettledCells = settleCells(t)): Reach {
  const n = t.inputs.length;
  const cols = cells.columns;
  const size = t.states.length * cols;
  const { term, fault } = cells;
  const powerUp = new Int32Array(cols).fill(L_NONE);
  const reachStable = new Uint8Array(size);
  const onPath = new Uint8Array(size);
  const queue = new Int32Array(size);
  let head = 0;
  let tail = 0;
  for (let c = 0; c < cols; c++) {
    const cell = t.reset * cols + c;
    markPath(t, cols, onPath, cell, 1);
    if (fault[cell] !== L_SETTLE_OK) continue;
    const st = term[cell]!;
    powerUp[c] = (st / cols) | 0;
    if (!reachStable[st]) {
      reachStable[st] = 1;
      queue[tail++] = st;
    }
  }
  while (head < tail) {
    const x = queue[head++]!;
    const c = x % cols;
    const base = x - c;
    for (let k = 0; k < n; k++) {
      const e = base + (c ^ (1 << k));
      if (!(onPath[e]! & 2)) markPath(t, cols, onPath, e, 2);
      if (fault[e] !== L_SETTLE_OK) continue;
      const st = term[e]!;
      if (!reachStable[st]) {
        reachStable[st] = 1;
        queue[tail++] = st;
      }
    }
  }
  const stableList = queue.slice(0, tail).sort();
  const reachableState = new Uint8Array(t.states.length);
  for (let s = 0; s < t.states.length; s++) {
    const base = s * cols;
    for (let c = 0; c < cols; c++) {
      if (onPath[base + c]) {
        reachableState[s] = 1;
        break;
      }
    }
  }
  return { cells, inputCount: n, powerUp, reachStable, stableList, onPath, reachableState };
}

/** Column indices in grid (Gray) order. */
export function listGrayColumns(inputCount: number): Int32Array {
  const keys = grayKeys(inputCount);
  const out = new Int32Array(keys.length);
  keys.forEach((k, i) => (out[i] = keyToColumn(k)));
  return out;
}

/** Position of each column in grid (Gray) order. */
export function rankGrayColumns(inputCount: number): Int32Array {
  const order = listGrayColumns(inputCount);
  const rank = new Int32Array(order.length);
  order.forEach((c, i) => (rank[c] = i));
  return rank;
}

/** A Runtime (runtime.ts) built from already settled cells, so callers need not settle twice. */
export function runtimeFromCells(t: FlowTable, cells: SettledCells): Runtime {
  const settled: SettledTable = { state: cells.state, fault: cells.fault };
  return { table: t, settled, columns: cells.columns };
}
