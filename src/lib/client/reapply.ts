/**
 * Reapplying a user's edits onto a newer head after a stale-base save: what changed between
 * the base and the user's draft is carried over to the head. That covers renamed, added and
 * deleted states, inputs and outputs, cells, the reset state, settings, the description and
 * scenarios. A cell both sides changed differently is a conflict, and the
 * user's value wins only when they confirm. Everything is matched by name, so reordered rows
 * still match.
 */
import { cellToText, countColumns, grayKeys, keyToColumn, NONE, setCellBits, cloneTable, type FlowTable } from '../engine/model';
import { applyEdit, EditError, type TableEdit } from './table-edits';

/** One cell both sides changed differently. */
export interface ReapplyConflict {
  state: string;
  inputs: string;
  base: string;
  mine: string;
  theirs: string;
}

/** The merged table, what was carried over, and the conflicts (the user's value was used for them). */
export interface ReapplyResult {
  table: FlowTable | null;
  applied: number;
  conflicts: ReapplyConflict[];
  /** Edits of the user's that were not carried over, and why (e.g. a deleted state the head changed). */
  notes: string[];
  /** Why a merge was not possible (e.g. together the two sides would exceed the input limit). */
  blocked: string | null;
}

type NameKind = 'state' | 'input' | 'output';
const LIST = { state: 'states', input: 'inputs', output: 'outputs' } as const;

function cellAt(t: FlowTable, state: string, key: string): string {
  const s = t.states.indexOf(state);
  if (s < 0) return '(no row)';
  return cellToText(t, s * countColumns(t.inputs.length) + keyToColumn(key));
}

/**
 * Renames base → mine: a name at some position of base that mine no longer has, where mine has
 * at the same position a name base does not have (a rename keeps its place; a delete and an add do not).
 */
function findRenames(base: string[], mine: string[]): [string, string][] {
  const pairs: [string, string][] = [];
  for (let i = 0; i < Math.min(base.length, mine.length); i++) {
    const from = base[i]!;
    const to = mine[i]!;
    if (from !== to && !mine.includes(from) && !base.includes(to)) pairs.push([from, to]);
  }
  return pairs;
}

function renameEdit(kind: NameKind, index: number, name: string): TableEdit {
  return kind === 'state' ? { kind: 'rename-state', index, name } : kind === 'input' ? { kind: 'rename-input', index, name } : { kind: 'rename-output', index, name };
}

/** Applies renames to a table where it still has the old name and not yet the new one; returns the table and the renames it could not apply. */
function applyRenames(t: FlowTable, kind: NameKind, pairs: [string, string][]): { table: FlowTable; skipped: [string, string][] } {
  let out = t;
  const skipped: [string, string][] = [];
  for (const [from, to] of pairs) {
    const list = out[LIST[kind]];
    const at = list.indexOf(from);
    if (at < 0 || list.includes(to)) skipped.push([from, to]);
    else out = applyEdit(out, renameEdit(kind, at, to));
  }
  return { table: out, skipped };
}

/** How many cells of a table lead to `state`. */
function countCellsInto(t: FlowTable, state: string): number {
  const target = t.states.indexOf(state);
  let n = 0;
  for (let i = 0; i < t.next.length; i++) if (t.next[i] === target) n++;
  return n;
}

function rowsEqual(a: FlowTable, b: FlowTable, state: string): boolean {
  return grayKeys(a.inputs.length).every((k) => cellAt(a, state, k) === cellAt(b, state, k));
}

type IoKind = 'input' | 'output';

function addEdit(kind: IoKind, name: string): TableEdit {
  return kind === 'input' ? { kind: 'add-input', name } : { kind: 'add-output', name };
}

function deleteEdit(t: FlowTable, kind: IoKind, name: string): TableEdit {
  const index = t[LIST[kind]].indexOf(name);
  return kind === 'input' ? { kind: 'delete-input', index } : { kind: 'delete-output', index };
}

/** Reorders a table's inputs or outputs to `order` (the same names). */
function reorderTo(t: FlowTable, kind: IoKind, order: string[]): FlowTable {
  let out = t;
  for (let i = 0; i < order.length; i++) {
    const from = out[LIST[kind]].indexOf(order[i]!);
    if (from !== i) out = applyEdit(out, kind === 'input' ? { kind: 'move-input', from, to: i } : { kind: 'move-output', from, to: i });
  }
  return out;
}

/** For each column of `from`, the column of `to` with the same input values (inputs `to` lacks are dropped; its own extra inputs are 0). */
function mapColumns(from: FlowTable, to: FlowTable): Int32Array {
  const map = new Int32Array(countColumns(from.inputs.length));
  const at = to.inputs.map((name) => from.inputs.indexOf(name));
  for (let c = 0; c < map.length; c++) at.forEach((k, j) => (map[c]! |= k >= 0 ? ((c >> k) & 1) << j : 0));
  return map;
}

/** Whether `mine` changed any cell of `base` where input `name` is 1 (those cells go when the head deletes that input). */
function changedWhereInputIsOne(base: FlowTable, mine: FlowTable, name: string): boolean {
  const k = base.inputs.indexOf(name);
  const toMine = mapColumns(base, mine);
  const cols = countColumns(base.inputs.length);
  const mineCols = countColumns(mine.inputs.length);
  // Rows the user added count too: against base they are all unspecified.
  for (const state of mine.states) {
    const bs = base.states.indexOf(state);
    const ms = mine.states.indexOf(state);
    for (let c = 0; c < cols; c++) {
      if (!((c >> k) & 1)) continue;
      const before = bs < 0 ? '-' : cellToText(base, bs * cols + c);
      if (before !== cellToText(mine, ms * mineCols + toMine[c]!)) return true;
    }
  }
  return false;
}

/** What a cell says of one output: '-' (unspecified or don't-care), '0' or '1'. */
function outputAt(t: FlowTable, cell: number, bit: number): string {
  if (cell < 0 || t.next[cell] === NONE || !(t.outCare[cell]! & bit)) return '-';
  return t.outValue[cell]! & bit ? '1' : '0';
}

/** Whether `mine` gives output `name` another value than `base` in any cell (both have the same inputs by now). */
function changedOutput(base: FlowTable, mine: FlowTable, name: string): boolean {
  const baseBit = 1 << base.outputs.indexOf(name);
  const mineBit = 1 << mine.outputs.indexOf(name);
  const cols = countColumns(mine.inputs.length);
  for (const state of mine.states) {
    const bs = base.states.indexOf(state);
    const ms = mine.states.indexOf(state);
    for (let c = 0; c < cols; c++) if (outputAt(mine, ms * cols + c, mineBit) !== outputAt(base, bs < 0 ? -1 : bs * cols + c, baseBit)) return true;
  }
  return false;
}

/**
 * Inputs and outputs added or deleted on either side: each side's change is made on the other two
 * tables (an added input starts unspecified where it is 1; a deleted one keeps the cells where it
 * was 0), then base and mine take the head's order, so the cells match one by one.
 */
function alignInputsAndOutputs(base: FlowTable, mine: FlowTable, head: FlowTable, notes: string[]): { base: FlowTable; mine: FlowTable; head: FlowTable; applied: number } {
  let [b, m, h] = [base, mine, head];
  let applied = 0;
  for (const kind of ['input', 'output'] as const) {
    const list = LIST[kind];
    const inBase = (x: string) => base[list].includes(x);
    const inMine = (x: string) => mine[list].includes(x);
    const inHead = (x: string) => head[list].includes(x);
    for (const x of base[list]) {
      if (inMine(x) && inHead(x)) continue;
      if (!inMine(x) && inHead(x)) {
        h = applyEdit(h, deleteEdit(h, kind, x)); // the user deleted it
        applied++;
      } else if (inMine(x) && !inHead(x)) {
        if (kind === 'input' && changedWhereInputIsOne(b, m, x)) notes.push(`Your cells where input ${x} is 1 were not carried over: the newer revision deleted input ${x}.`);
        if (kind === 'output' && changedOutput(b, m, x)) notes.push(`Your values of output ${x} were not carried over: the newer revision deleted output ${x}.`);
        m = applyEdit(m, deleteEdit(m, kind, x));
      }
      b = applyEdit(b, deleteEdit(b, kind, x));
    }
    for (const x of mine[list])
      if (!inBase(x) && !inHead(x)) {
        h = applyEdit(h, addEdit(kind, x)); // the user added it
        b = applyEdit(b, addEdit(kind, x));
        applied++;
      }
    for (const x of head[list])
      if (!inBase(x)) {
        if (!inMine(x)) m = applyEdit(m, addEdit(kind, x));
        b = applyEdit(b, addEdit(kind, x));
      }
    b = reorderTo(b, kind, h[list]);
    m = reorderTo(m, kind, h[list]);
  }
  return { base: b, mine: m, head: h, applied };
}

/** Carries the edits base→mine over to theirs. */
export function reapplyEdits(base: FlowTable, mine: FlowTable, theirs: FlowTable): ReapplyResult {
  const notes: string[] = [];
  let applied = 0;
  // 1. Renames first, on the base and the head alike, so that every later step matches by the user's names.
  let baseR = base;
  let out = cloneTable(theirs);
  // The user's rows that have no counterpart in the head (a rename the head made impossible).
  const unmatchedRows = new Set<string>();
  for (const kind of ['input', 'output', 'state'] as const) {
    const pairs = findRenames(base[LIST[kind]], mine[LIST[kind]]);
    if (!pairs.length) continue;
    baseR = applyRenames(baseR, kind, pairs).table;
    const renamed = applyRenames(out, kind, pairs);
    out = renamed.table;
    applied += pairs.length - renamed.skipped.length;
    if (kind === 'state') for (const [, to] of renamed.skipped) unmatchedRows.add(to);
    for (const [from, to] of renamed.skipped)
      notes.push(`Your rename of ${kind} ${from} to ${to} was not carried over: the newer revision ${out[LIST[kind]].includes(to) ? `already has a ${kind} ${to}` : `no longer has ${from}`}.`);
  }
  // 2. Inputs and outputs either side added or deleted.
  let mineR: FlowTable;
  try {
    const aligned = alignInputsAndOutputs(baseR, mine, out, notes);
    [baseR, mineR, out] = [aligned.base, aligned.mine, aligned.head];
    applied += aligned.applied;
  } catch (error) {
    if (!(error instanceof EditError)) throw error;
    return { table: null, applied: 0, conflicts: [], notes, blocked: `the inputs and outputs of both sides do not fit together: ${error.message}` };
  }

  // 3. States the user deleted: gone from the head too, unless the head changed that row meanwhile.
  for (const s of baseR.states) {
    if (mineR.states.includes(s)) continue;
    const at = out.states.indexOf(s);
    if (at < 0) continue;
    if (!rowsEqual(baseR, out, s)) notes.push(`Your deletion of state ${s} was not carried over: the newer revision changed its row.`);
    else if (countCellsInto(out, s) > countCellsInto(baseR, s)) notes.push(`Your deletion of state ${s} was not carried over: the newer revision added transitions into it.`);
    else if (out.states.length > 1) {
      out = applyEdit(out, { kind: 'delete-state', index: at });
      applied++;
    }
  }
  // 4. States the user added (not in base) and that the head does not have yet.
  for (const s of mineR.states)
    if (!baseR.states.includes(s) && !out.states.includes(s)) {
      out = applyEdit(out, { kind: 'add-state', name: s });
      applied++;
    }
  // 5. Cells, by state name and input key.
  const keys = grayKeys(mineR.inputs.length);
  const cols = countColumns(mineR.inputs.length);
  const conflicts: ReapplyConflict[] = [];
  for (const s of mineR.states) {
    const row = out.states.indexOf(s);
    if (unmatchedRows.has(s)) continue;
    if (row < 0) {
      if (baseR.states.includes(s) && !rowsEqual(baseR, mineR, s)) notes.push(`Your edits of state ${s} were not carried over: the newer revision no longer has that state.`);
      continue;
    }
    for (const k of keys) {
      const m = cellAt(mineR, s, k);
      const b = baseR.states.includes(s) ? cellAt(baseR, s, k) : '-';
      if (m === b) continue;
      const th = cellAt(out, s, k);
      if (th === m) continue;
      if (th !== b && th !== '(no row)') conflicts.push({ state: s, inputs: k, base: b, mine: m, theirs: th });
      const mi = mineR.states.indexOf(s) * cols + keyToColumn(k);
      const cell = row * cols + keyToColumn(k);
      const nx = mineR.next[mi]!;
      if (nx === NONE) {
        out.next[cell] = NONE;
        out.outCare[cell] = 0;
        out.outValue[cell] = 0;
      } else {
        const target = out.states.indexOf(mineR.states[nx]!);
        if (target < 0) {
          notes.push(`Your cell ${s} @ ${k} (${m}) was not carried over: the newer revision has no state ${mineR.states[nx]}.`);
          continue;
        }
        out.next[cell] = target;
        const text = cellToText(mineR, mi);
        setCellBits(out, cell, text.includes('/') ? text.slice(text.lastIndexOf('/') + 1) : '');
      }
      applied++;
    }
  }
  // 6. The reset state, settings, description and scenarios the user changed.
  const myReset = mineR.states[mineR.reset]!;
  if (myReset !== baseR.states[baseR.reset] && out.states[out.reset] !== myReset) {
    const at = out.states.indexOf(myReset);
    if (at >= 0) {
      out = applyEdit(out, { kind: 'set-reset', index: at });
      applied++;
    } else notes.push(`Your reset state ${myReset} was not carried over: the newer revision has no state ${myReset}.`);
  }
  if (mineR.settings.doubleChange !== base.settings.doubleChange) out.settings.doubleChange = mineR.settings.doubleChange;
  if (mineR.settings.prefix !== base.settings.prefix) {
    if (mineR.settings.prefix) out.settings.prefix = mineR.settings.prefix;
    else delete out.settings.prefix;
  }
  if (mineR.description !== base.description) {
    if (mineR.description !== undefined) out.description = mineR.description;
    else delete out.description;
  }
  for (const sc of mineR.scenarios) if (!baseR.scenarios.some((b) => b.name === sc.name && b.inputs.join() === sc.inputs.join())) out = applyEdit(out, { kind: 'add-scenario', scenario: sc });
  return { table: out, applied, conflicts, notes, blocked: null };
}
