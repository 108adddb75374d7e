/**
 * The shared core of analysis, fill and tour: every cell settled in one linear pass (with the
 * terminal cell and per-output summaries of the settle path), and the closure of the power-up
 * total states under single-input changes. Everything here is typed arrays; names are only
 * built by the callers, for findings.
 */
import { countColumns, grayKeys, keyToColumn, NONE, type FlowTable } from './model';
import { SETTLE_OK, SETTLE_OSCILLATION, SETTLE_UNSPECIFIED, type SettledTable } from './settle';
import type { Runtime } from './runtime';

// module-local copies: imported bindings can compile to getter calls, which hot loops should not pay for
const L_NONE: number = NONE;
const L_SETTLE_OK: number = SETTLE_OK;
const L_SETTLE_OSCILLATION: number = SETTLE_OSCILLATION;
const L_SETTLE_UNSPECIFIED: number = SETTLE_UNSPECIFIED;

/**
 * Every cell settled, indexed like `FlowTable.next`. `term` is the cell where settling ends: the
 * stable cell, the unspecified cell, or for an oscillation the cycle's cell with the lowest state
 * index (so one cycle has one `term`, which dedupes oscillations).
 *
 * The output summaries describe the settle path from a cell to its stable end (only where
 * `fault` is L_SETTLE_OK), with don't-cares dropped, as bit masks over the outputs:
 * `firstCare`/`firstValue`: whether some cell on the path specifies the output, and the first such
 * value (this is also the value a backward fill gives the cell); `once`/`twice`: the specified
 * values change at least once / at least twice along the path; `risk`: some don't-care transient
 * cell strictly after this one could add a change (see `computeEntryRisk`).
 */
export interface SettledCells {
  columns: number;
  term: Int32Array;
  fault: Uint8Array;
  /** Settled state of each cell, or NONE where settling fails (2 bytes a cell, for the random-access loops). */
  state: Int16Array;
  firstCare: Uint32Array;
  firstValue: Uint32Array;
  once: Uint32Array;
  twice: Uint32Array;
  risk: Uint32Array;
}

const EMPTY_U32 = new Uint32Array(0);

/**
 * Settles every cell and summarizes output changes along each settle path, in time linear in the
 * table size: each column is a functional graph, so one memoized walk per cell is enough. Walking
 * column by column keeps the walk marks in a small per-state array (measured several times faster
 * than row-by-row walking with per-cell marks on a 1024 x 1024 table).
 */
export function settleCells(t: FlowTable): SettledCells {
  const inputCount = t.inputs.length;
  const cols = countColumns(inputCount);
  const n = t.states.length;
  const size = n * cols;
  const next = t.next;
  const outCare = t.outCare;
  const outValue = t.outValue;
  const withOutputs = t.outputs.length > 0;
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
      let resFault = L_SETTLE_OK;
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
          resFault = L_SETTLE_OSCILLATION;
          break;
        }
        mark[s] = 1;
        pos[s] = depth;
        stack[depth++] = s;
        const cell = (s << inputCount) | c;
        const nx = next[cell]!;
        if (nx === L_NONE) {
          resTerm = cell;
          resFault = L_SETTLE_UNSPECIFIED;
          break;
        }
        if (nx === s) {
          resTerm = cell;
          break;
        }
        s = nx;
      }
      const resState = resFault === L_SETTLE_OK ? resTerm >> inputCount : L_NONE;
      for (let i = depth - 1; i >= 0; i--) {
        const v = stack[i]!;
        const cell = (v << inputCount) | c;
        mark[v] = 2;
        term[cell] = resTerm;
        fault[cell] = resFault;
        state[cell] = resState;
        if (resFault !== L_SETTLE_OK || !withOutputs) continue;
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
