/**
 * Reapplying a user's edits onto a newer head after a stale-base save: the cells, states,
 * names and settings that changed between the base and the user's draft are carried over to
 * the head; a cell that both sides changed differently is a conflict, and the user's value wins
 * only when they confirm. Works by names, so reordered rows still match.
 */
import { cellToText, countColumns, grayKeys, keyToColumn, NONE, setCellBits, cloneTable, type FlowTable } from '../engine/model';
import { applyEdit } from './table-edits';

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
  /** Why a cell-by-cell merge was not possible (inputs or outputs differ). */
  blocked: string | null;
}

function cellAt(t: FlowTable, state: string, key: string): string {
  const s = t.states.indexOf(state);
  if (s < 0) return '(no row)';
  return cellToText(t, s * countColumns(t.inputs.length) + keyToColumn(key));
}

/** Carries the edits base→mine over to theirs. */
export function reapplyEdits(base: FlowTable, mine: FlowTable, theirs: FlowTable): ReapplyResult {
  const same = (a: string[], b: string[]) => a.length === b.length && a.every((x, i) => x === b[i]);
  if (!same(base.inputs, theirs.inputs) || !same(base.outputs, theirs.outputs) || !same(base.inputs, mine.inputs) || !same(base.outputs, mine.outputs))
    return { table: null, applied: 0, conflicts: [], blocked: 'The inputs or outputs were changed on one side, so cells cannot be matched one by one.' };
  let out = cloneTable(theirs);
  let applied = 0;
  // States the user added (not in base) and that the head does not have yet.
  for (const s of mine.states)
    if (!base.states.includes(s) && !out.states.includes(s)) {
      out = applyEdit(out, { kind: 'add-state', name: s });
      applied++;
    }
  const keys = grayKeys(mine.inputs.length);
  const cols = countColumns(mine.inputs.length);
  const conflicts: ReapplyConflict[] = [];
  for (const s of mine.states) {
    const row = out.states.indexOf(s);
    if (row < 0) continue;
    for (const k of keys) {
      const m = cellAt(mine, s, k);
      const b = base.states.includes(s) ? cellAt(base, s, k) : '-';
      if (m === b) continue;
      const th = cellAt(theirs, s, k);
      if (th !== b && th !== m && th !== '(no row)') conflicts.push({ state: s, inputs: k, base: b, mine: m, theirs: th });
      const mi = mine.states.indexOf(s) * cols + keyToColumn(k);
      const cell = row * cols + keyToColumn(k);
      const nx = mine.next[mi]!;
      if (nx === NONE) {
        out.next[cell] = NONE;
        out.outCare[cell] = 0;
        out.outValue[cell] = 0;
      } else {
        const target = out.states.indexOf(mine.states[nx]!);
        if (target < 0) continue;
        out.next[cell] = target;
        const text = cellToText(mine, mi);
        setCellBits(out, cell, text.includes('/') ? text.slice(text.lastIndexOf('/') + 1) : '');
      }
      applied++;
    }
  }
  // Settings and description the user changed.
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
  return { table: out, applied, conflicts, blocked: null };
}
