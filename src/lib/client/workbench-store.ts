/**
 * The workbench's one model: the FlowTable being edited, the source text shown in the editor,
 * and undo/redo history. The grid and the source editor both dispatch here, which is what
 * keeps them in sync: a grid edit reprints the source, a source edit that parses replaces the table.
 */
import { useReducer } from 'react';
import { FlowTableError, tablesEqual, type EngineIssue, type FlowTable } from '../engine/model';
import { parseText, tableToText } from '../engine/formats/text';
import { applyEdit, describeEdit, EditError, type TableEdit } from './table-edits';

/** How many steps undo keeps. */
export const HISTORY_LIMIT = 200;

/** One entry of the undo history. */
export interface HistoryEntry {
  table: FlowTable;
  label: string;
}

/** The state the workbench reducer holds. */
export interface WorkbenchState {
  table: FlowTable;
  /** What the source editor shows; equals `tableToText(table)` unless the user is mid-edit. */
  source: string;
  /** Parse problems of `source` when it does not parse (the table then stays at the last good one). */
  sourceIssues: EngineIssue[];
  past: HistoryEntry[];
  future: HistoryEntry[];
  /** Counts table changes; panels use it as a cheap memo key. */
  version: number;
  /** Where the last change came from; the source editor only reloads on changes it did not make. */
  origin: 'load' | 'grid' | 'source' | 'history';
  /** The last rejected edit's message, shown next to the grid. */
  editError: string | null;
  /** True when the table differs from what was loaded or last saved. */
  dirty: boolean;
}

/** Everything that can change the workbench model. */
export type WorkbenchAction =
  | { type: 'edit'; edit: TableEdit }
  | { type: 'edits'; edits: TableEdit[]; label: string }
  | { type: 'replace'; table: FlowTable; label: string }
  | { type: 'source'; text: string }
  | { type: 'undo' }
  | { type: 'redo' }
  | { type: 'load'; table: FlowTable; source?: string; dirty?: boolean }
  | { type: 'mark-saved' }
  | { type: 'dismiss-error' };

/** The initial state for a table (source printed canonically unless given). */
export function initWorkbench(table: FlowTable, source?: string, dirty = false): WorkbenchState {
  return { table, source: source ?? tableToText(table), sourceIssues: [], past: [], future: [], version: 0, origin: 'load', editError: null, dirty };
}

function pushed(state: WorkbenchState, table: FlowTable, label: string, origin: WorkbenchState['origin'], source?: string): WorkbenchState {
  const past = [...state.past, { table: state.table, label }];
  if (past.length > HISTORY_LIMIT) past.splice(0, past.length - HISTORY_LIMIT);
  return {
    ...state,
    table,
    source: source ?? tableToText(table),
    sourceIssues: [],
    past,
    future: [],
    version: state.version + 1,
    origin,
    editError: null,
    dirty: true,
  };
}

/** Turns any parse failure into located issues (a FlowTableError already carries them). */
export function issuesOf(e: unknown): EngineIssue[] {
  if (e instanceof FlowTableError) return e.issues;
  return [{ where: '1:1', message: e instanceof Error ? e.message : String(e), line: 1, column: 1 }];
}

/** The reducer: pure, so it can be tested without React. */
export function workbenchReducer(state: WorkbenchState, action: WorkbenchAction): WorkbenchState {
  switch (action.type) {
    case 'edit': {
      try {
        const table = applyEdit(state.table, action.edit);
        if (table === state.table) return state;
        return pushed(state, table, describeEdit(state.table, action.edit), 'grid');
      } catch (e) {
        if (e instanceof EditError) return { ...state, editError: e.message };
        throw e;
      }
    }
    case 'edits': {
      try {
        let table = state.table;
        for (const e of action.edits) table = applyEdit(table, e);
        if (table === state.table) return state;
        return pushed(state, table, action.label, 'grid');
      } catch (e) {
        if (e instanceof EditError) return { ...state, editError: e.message };
        throw e;
      }
    }
    case 'replace':
      return pushed(state, action.table, action.label, 'grid');
    case 'source': {
      if (action.text === state.source) return state;
      let table: FlowTable;
      try {
        table = parseText(action.text);
      } catch (e) {
        return { ...state, source: action.text, sourceIssues: issuesOf(e), origin: 'source' };
      }
      if (tablesEqual(table, state.table)) return { ...state, source: action.text, sourceIssues: [], origin: 'source' };
      return pushed(state, table, 'edit source', 'source', action.text);
    }
    case 'undo': {
      const last = state.past[state.past.length - 1];
      if (!last) return state;
      return {
        ...state,
        table: last.table,
        source: tableToText(last.table),
        sourceIssues: [],
        past: state.past.slice(0, -1),
        future: [{ table: state.table, label: last.label }, ...state.future],
        version: state.version + 1,
        origin: 'history',
        editError: null,
        dirty: true,
      };
    }
    case 'redo': {
      const next = state.future[0];
      if (!next) return state;
      return {
        ...state,
        table: next.table,
        source: tableToText(next.table),
        sourceIssues: [],
        past: [...state.past, { table: state.table, label: next.label }],
        future: state.future.slice(1),
        version: state.version + 1,
        origin: 'history',
        editError: null,
        dirty: true,
      };
    }
    case 'load':
      return { ...initWorkbench(action.table, action.source, action.dirty ?? false), version: state.version + 1 };
    case 'mark-saved':
      return { ...state, dirty: false };
    case 'dismiss-error':
      return { ...state, editError: null };
  }
}

/** React hook around the reducer. */
export function useWorkbenchStore(table: FlowTable, source?: string, dirty = false) {
  return useReducer(workbenchReducer, undefined, () => initWorkbench(table, source, dirty));
}
