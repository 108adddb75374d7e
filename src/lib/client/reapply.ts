/**
 * Reapplying a user's edits onto a newer head after a stale-base save: what changed between
 * the base and the user's draft is carried over to the head. That covers renamed states,
 * inputs and outputs, added and deleted states, cells, the reset state, settings, the
 * description and scenarios. A cell both sides changed differently is a conflict, and the
 * user's value wins only when they confirm. Everything is matched by name, so reordered rows
 * still match.
 */
import { cellToText, countColumns, grayKeys, keyToColumn, NONE, setCellBits, cloneTable, type FlowTable } from '../engine/model';
import { applyEdit, type TableEdit } from './table-edits';

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
  /** Why a cell-by-cell merge was not possible (inputs or outputs added or deleted). */
  blocked: string | null;
}

type NameKind = 'state' | 'input' | 'output';
const LIST = { state: 'states', input: 'inputs', output: 'outputs' } as const;

function cellAt(t: FlowTable, state: string, key: string): string {
  const s = t.states.indexOf(state);
  if (s < 0) return '(no row)';
  return cellToText(t, s * countColumns(t.inputs.length) + keyToColumn(key));
}

function sameList(a: string[], b: string[]): boolean {
  return a.length === b.length && a.every((x, i) => x === b[i]);
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

function rowsEqual(a: FlowTable, b: FlowTable, state: string): boolean {
  return grayKeys(a.inputs.length).every((k) => cellAt(a, state, k) === cellAt(b, state, k));
}

function describeListChange(kind: 'input' | 'output', base: string[], mine: string[], theirs: string[]): string | null {
  const added = (from: string[], to: string[]) => to.filter((x) => !from.includes(x));
  const parts: string[] = [];
  for (const [who, side] of [
    ['you', mine],
    ['the newer revision', theirs],
  ] as const) {
    const plus = added(base, side);
    const minus = added(side, base);
    if (plus.length) parts.push(`${who} added ${kind}${plus.length > 1 ? 's' : ''} ${plus.join(', ')}`);
    if (minus.length) parts.push(`${who} deleted ${kind}${minus.length > 1 ? 's' : ''} ${minus.join(', ')}`);
    if (!plus.length && !minus.length && !sameList(base, side)) parts.push(`${who} reordered the ${kind}s`);
  }
  return parts.length ? parts.join('; ') : null;
}

/** Carries the edits base→mine over to theirs. */
export function reapplyEdits(base: FlowTable, mine: FlowTable, theirs: FlowTable): ReapplyResult {
  const notes: string[] = [];
  let applied = 0;
  // 1. Renames first, on the base and the head alike, so that every later step matches by the user's names.
  let baseR = base;
  let out = cloneTable(theirs);
  for (const kind of ['input', 'output', 'state'] as const) {
    const pairs = findRenames(base[LIST[kind]], mine[LIST[kind]]);
    if (!pairs.length) continue;
    baseR = applyRenames(baseR, kind, pairs).table;
    const renamed = applyRenames(out, kind, pairs);
    out = renamed.table;
    applied += pairs.length - renamed.skipped.length;
    for (const [from, to] of renamed.skipped)
      notes.push(`Your rename of ${kind} ${from} to ${to} was not carried over: the newer revision ${out[LIST[kind]].includes(to) ? `already has a ${kind} ${to}` : `no longer has ${from}`}.`);
  }
  const inputs = describeListChange('input', baseR.inputs, mine.inputs, out.inputs);
  const outputs = describeListChange('output', baseR.outputs, mine.outputs, out.outputs);
  if (inputs || outputs)
    return { table: null, applied: 0, conflicts: [], notes, blocked: `${[inputs, outputs].filter(Boolean).join('; ')}, so cells cannot be matched one by one.` };

  // 2. States the user deleted: gone from the head too, unless the head changed that row meanwhile.
  for (const s of baseR.states) {
    if (mine.states.includes(s)) continue;
    const at = out.states.indexOf(s);
    if (at < 0) continue;
    if (!rowsEqual(baseR, out, s)) notes.push(`Your deletion of state ${s} was not carried over: the newer revision changed its row.`);
    else if (out.states.length > 1) {
      out = applyEdit(out, { kind: 'delete-state', index: at });
      applied++;
    }
  }
  // 3. States the user added (not in base) and that the head does not have yet.
  for (const s of mine.states)
    if (!baseR.states.includes(s) && !out.states.includes(s)) {
      out = applyEdit(out, { kind: 'add-state', name: s });
      applied++;
    }
  // 4. Cells, by state name and input key.
  const keys = grayKeys(mine.inputs.length);
  const cols = countColumns(mine.inputs.length);
  const conflicts: ReapplyConflict[] = [];
  for (const s of mine.states) {
    const row = out.states.indexOf(s);
    if (row < 0) continue;
    for (const k of keys) {
      const m = cellAt(mine, s, k);
      const b = baseR.states.includes(s) ? cellAt(baseR, s, k) : '-';
      if (m === b) continue;
      const th = cellAt(out, s, k);
      if (th === m) continue;
      if (th !== b && th !== '(no row)') conflicts.push({ state: s, inputs: k, base: b, mine: m, theirs: th });
      const mi = mine.states.indexOf(s) * cols + keyToColumn(k);
      const cell = row * cols + keyToColumn(k);
      const nx = mine.next[mi]!;
      if (nx === NONE) {
        out.next[cell] = NONE;
        out.outCare[cell] = 0;
        out.outValue[cell] = 0;
      } else {
        const target = out.states.indexOf(mine.states[nx]!);
        if (target < 0) {
          notes.push(`Your cell ${s} @ ${k} (${m}) was not carried over: the newer revision has no state ${mine.states[nx]}.`);
          continue;
        }
        out.next[cell] = target;
        const text = cellToText(mine, mi);
        setCellBits(out, cell, text.includes('/') ? text.slice(text.lastIndexOf('/') + 1) : '');
      }
      applied++;
    }
  }
  // 5. The reset state, settings, description and scenarios the user changed.
  const myReset = mine.states[mine.reset]!;
  if (myReset !== baseR.states[baseR.reset] && out.states[out.reset] !== myReset) {
    const at = out.states.indexOf(myReset);
    if (at >= 0) {
      out = applyEdit(out, { kind: 'set-reset', index: at });
      applied++;
    }
  }
  if (mine.settings.doubleChange !== base.settings.doubleChange) out.settings.doubleChange = mine.settings.doubleChange;
  if (mine.settings.prefix !== base.settings.prefix) {
    if (mine.settings.prefix) out.settings.prefix = mine.settings.prefix;
    else delete out.settings.prefix;
  }
  if (mine.description !== base.description) {
    if (mine.description !== undefined) out.description = mine.description;
    else delete out.description;
  }
  for (const sc of mine.scenarios) if (!base.scenarios.some((b) => b.name === sc.name && b.inputs.join() === sc.inputs.join())) out = applyEdit(out, { kind: 'add-scenario', scenario: sc });
  return { table: out, applied, conflicts, notes, blocked: null };
}
