/**
 * Output fill: give don't-care outputs of transient cells values so that no single-input change
 * (SIC) from a reachable stable total state can make an output flicker.
 *
 * Trade rule (common practice, no source): between equal stable values a transient cell takes that
 * value; between different values the output may change only once.
 *
 * Our precise rule, and why it is consistent: a transient cell that gets a value gets the *next
 * specified value on its own settle path* (backward fill: the value the output is heading to). In
 * one column every cell has exactly one settle path, so a cell shared by many SIC paths gets one
 * value for all of them: there are no fill conflicts between paths. Inserting a copy of the next
 * value never adds a change, so fill creates no glitch on any path. A don't-care is assigned only
 * where leaving it open is risky on at least one path through it, that is where the value before it
 * on that path (the start cell's value, or the previous cell's specified-or-filled value) equals the
 * value it heads to, or the start cell leaves it open too. A cell left open therefore always sits
 * between a specified value and a different next value on every path, where either value changes
 * the output exactly once. So in the textbook gated latch, the 8 transient cells between equal
 * values are assigned and the 4 between different values stay open.
 *
 * Not fillable: a path whose specified values already change more than once (an output-glitch);
 * every such (path, output) is reported as a conflict. Cells whose whole settle path leaves the
 * output open (including the stable end) stay open: at run time the output then holds whatever it
 * had, so there is no value to copy; specify the stable cell first.
 * Only cells on SIC paths from reachable stable total states are touched; specified values never change.
 */
import { cloneTable, columnToKey, NONE, type FlowTable } from './model';
import { SETTLE_OK } from './settle';
import { computeEntryRisk, computeReach, listGrayColumns, settleCells } from './reachability';

// module-local copies: imported bindings can compile to getter calls, which hot loops should not pay for
const L_NONE: number = NONE;
const L_SETTLE_OK: number = SETTLE_OK;

/** One don't-care output that fill gave a value. */
export interface FillAssignment {
  state: string;
  inputs: string;
  output: string;
  value: 0 | 1;
}

/** An SIC (from stable (state, from) to column inputs) whose output glitches whatever fill does. */
export interface FillConflict {
  state: string;
  from: string;
  inputs: string;
  output: string;
  reason: string;
}

/** The filled table and what changed. */
export interface FillResult {
  table: FlowTable;
  assignments: FillAssignment[];
  conflicts: FillConflict[];
}

/** Fills don't-care outputs in transient cells so that single-input changes cannot glitch (see the module comment for the rule). */
export function fillOutputs(t: FlowTable): FillResult {
  const table = cloneTable(t);
  const assignments: FillAssignment[] = [];
  const conflicts: FillConflict[] = [];
  const m = t.outputs.length;
  if (m === 0) return { table, assignments, conflicts };
  const n = t.inputs.length;
  const cells = settleCells(t);
  const reach = computeReach(t, cells);
  const cols = cells.columns;
  const { fault, firstCare, firstValue, once, twice } = cells;
  const { next, outCare, outValue } = t;
  const size = next.length;
  const need = new Uint32Array(size);

  // risky steps inside settle paths: y -> x with x transient, open, heading to the value y has
  for (let y = 0; y < size; y++) {
    if (!(reach.onPath[y]! & 2) || fault[y] !== L_SETTLE_OK) continue;
    const sy = (y / cols) | 0;
    const nx = next[y]!;
    if (nx === sy || nx === L_NONE) continue;
    const c = y - sy * cols;
    const x = nx * cols + c;
    if (next[x] === nx) continue;
    need[x] = (need[x]! | (~outCare[x]! & firstCare[x]! & ~(firstValue[y]! ^ firstValue[x]!))) >>> 0;
  }

  // entries of SIC paths, and the conflicts (paths that glitch in their specified values)
  const keys: string[] = [];
  for (let c = 0; c < cols; c++) keys.push(columnToKey(c, n));
  for (let i = 0; i < reach.stableList.length; i++) {
    const x = reach.stableList[i]!;
    const s = (x / cols) | 0;
    const c = x - s * cols;
    const care0 = outCare[x]!;
    const val0 = outValue[x]! & care0;
    for (let k = 0; k < n; k++) {
      const c2 = c ^ (1 << k);
      const e = s * cols + c2;
      if (fault[e] !== L_SETTLE_OK) continue;
      const fc = firstCare[e]!;
      const fv = firstValue[e]!;
      const g = (twice[e]! | (care0 & fc & (val0 ^ fv) & once[e]!)) >>> 0;
      for (let o = 0; o < m; o++) {
        if (!((g >>> o) & 1)) continue;
        conflicts.push({
          state: t.states[s]!,
          from: keys[c]!,
          inputs: keys[c2]!,
          output: t.outputs[o]!,
          reason: `the specified values of ${t.outputs[o]} already go ${listSpecifiedValues(t, s, c, c2, o).join(', ')} along this change, and fill never changes specified values`,
        });
      }
      need[e] = (need[e]! | computeEntryRisk(t, cells, e, care0, val0)) >>> 0;
    }
  }

  const gray = listGrayColumns(n);
  for (let s = 0; s < t.states.length; s++) {
    for (let gi = 0; gi < cols; gi++) {
      const c = gray[gi]!;
      const x = s * cols + c;
      const mask = need[x]!;
      if (mask === 0) continue;
      table.outCare[x] = (outCare[x]! | mask) >>> 0;
      table.outValue[x] = ((outValue[x]! & outCare[x]!) | (firstValue[x]! & mask)) >>> 0;
      for (let o = 0; o < m; o++) {
        if ((mask >>> o) & 1) assignments.push({ state: t.states[s]!, inputs: keys[c]!, output: t.outputs[o]!, value: ((firstValue[x]! >>> o) & 1) as 0 | 1 });
      }
    }
  }
  return { table, assignments, conflicts };
}

/** Specified values of output `o` from stable (s, c) along the settle path in column c2. */
function listSpecifiedValues(t: FlowTable, s: number, c: number, c2: number, o: number): number[] {
  const cols = 1 << t.inputs.length;
  const values: number[] = [];
  const at = (cell: number): void => {
    if ((t.outCare[cell]! >>> o) & 1) values.push((t.outValue[cell]! >>> o) & 1);
  };
  at(s * cols + c);
  let x = s;
  for (let guard = 0; guard <= t.states.length; guard++) {
    const cell = x * cols + c2;
    at(cell);
    const nx = t.next[cell]!;
    if (nx === x || nx === L_NONE) break;
    x = nx;
  }
  return values;
}
