/**
 * The flow-table grid: rows are states, columns are input combinations in Gray order.
 * Stable cells carry a ring around the next state and the word-mark "stable" for screen
 * readers; unspecified cells are hatched and read "unspecified"; don't-care output bits print
 * as "–". Keyboard: arrows move, typing starts an edit with state-name completion, "-" clears
 * a cell, Enter edits or commits, Escape cancels, Delete clears.
 */
import { useCallback, useEffect, useMemo, useRef, useState, type KeyboardEvent as ReactKeyboardEvent } from 'react';
import { useVirtualizer } from '@tanstack/react-virtual';
import { countColumns, grayKeys, keyToColumn, NONE, type FlowTable } from '../../lib/engine/model';
import { checkName, proposeName, type TableEdit } from '../../lib/client/table-edits';

/** Narrowest cell, and row height in px; both fixed per table so that virtualization can compute offsets. */
const MIN_COL_W = 92;
const ROW_H = 36;
const HEAD_W = 150;
/** Columns and rows beyond which the grid renders only what is on screen. */
export const VIRTUALIZE_ABOVE = 64;

/** A cell position: state row and column index (not the display position). */
export interface GridCell {
  state: number;
  column: number;
}

/** Cells to highlight for a selected finding: the ordered path and how it ends. */
export interface GridPath {
  cells: GridCell[];
  /** `stable` path ends in a stable cell; `fail` ends at a problem (unspecified, loop, glitch). */
  end: 'stable' | 'fail';
}

/** Props of the grid island part. */
export interface FlowGridProps {
  table: FlowTable;
  readOnly: boolean;
  selected: GridCell | null;
  onSelect: (c: GridCell) => void;
  onEdit: (e: TableEdit) => void;
  onEdits: (edits: TableEdit[], label: string) => void;
  /** Cells with findings, by cell index, with the worst severity. */
  marks?: Map<number, 'error' | 'warning' | 'info'>;
  path?: GridPath | null;
  editError?: string | null;
}

/** Parses what the user typed into a cell: `next`, `next/bits`, `/bits` or `-`. */
export function parseCellInput(text: string, t: FlowTable, current: { next: number }): { next: number; bits: string | null } | { error: string } {
  const s = text.trim();
  if (s === '' || s === '-') return { next: NONE, bits: null };
  const slash = s.lastIndexOf('/');
  const namePart = (slash >= 0 ? s.slice(0, slash) : s).trim();
  const bitsPart = slash >= 0 ? s.slice(slash + 1).trim() : null;
  let next = current.next;
  if (namePart !== '') {
    const i = t.states.indexOf(namePart);
    if (i < 0) {
      const matches = t.states.filter((x) => x.toLowerCase().startsWith(namePart.toLowerCase()));
      if (matches.length === 1) next = t.states.indexOf(matches[0]!);
      else return { error: matches.length > 1 ? `"${namePart}" matches ${matches.slice(0, 4).join(', ')}: type more` : `no state named "${namePart}"` };
    } else next = i;
  }
  if (next === NONE) return { error: 'name the next state first' };
  if (bitsPart !== null) {
    if (t.outputs.length === 0 && bitsPart !== '') return { error: 'the table has no outputs' };
    if (!new RegExp(`^[01-]{${t.outputs.length}}$`).test(bitsPart)) return { error: `outputs are ${t.outputs.length} characters of 0, 1 or -` };
  }
  return { next, bits: bitsPart };
}

/** The grid with its structure bar (inputs, outputs, states) and cell editor. */
export default function FlowGrid(props: FlowGridProps) {
  const { table: t, readOnly, selected, onSelect, onEdit, onEdits, marks, path, editError } = props;
  const keys = useMemo(() => grayKeys(t.inputs.length), [t.inputs.length]);
  const columnsInOrder = useMemo(() => keys.map(keyToColumn), [keys]);
  const displayOf = useMemo(() => {
    const m = new Map<number, number>();
    columnsInOrder.forEach((c, i) => m.set(c, i));
    return m;
  }, [columnsInOrder]);
  const cols = countColumns(t.inputs.length);
  // Wide enough for the longest state name (up to 14 characters shown) plus "/" and the output bits, in Fira Code at 14px.
  const COL_W = useMemo(() => {
    const name = Math.min(14, Math.max(1, ...t.states.map((n) => n.length)));
    return Math.min(220, Math.max(MIN_COL_W, Math.ceil((name + t.outputs.length + 1) * 8.6 + 34)));
  }, [t.states, t.outputs.length]);
  const scrollRef = useRef<HTMLDivElement>(null);
  const gridRef = useRef<HTMLDivElement>(null);
  const [editing, setEditing] = useState<{ text: string; error: string | null; pick: number } | null>(null);
  const [menu, setMenu] = useState<{ kind: 'state' | 'input' | 'output'; index: number } | null>(null);

  const virtualCols = keys.length > VIRTUALIZE_ABOVE;
  const virtualRows = t.states.length > VIRTUALIZE_ABOVE;
  const colV = useVirtualizer({ count: keys.length, horizontal: true, getScrollElement: () => scrollRef.current, estimateSize: () => COL_W, overscan: 6, enabled: virtualCols });
  const rowV = useVirtualizer({ count: t.states.length, getScrollElement: () => scrollRef.current, estimateSize: () => ROW_H, overscan: 8, enabled: virtualRows });
  useEffect(() => {
    colV.measure();
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [COL_W]);
  const colItems = virtualCols ? colV.getVirtualItems().map((v) => v.index) : keys.map((_, i) => i);
  const rowItems = virtualRows ? rowV.getVirtualItems().map((v) => v.index) : t.states.map((_, i) => i);
  const colPadL = virtualCols && colItems.length ? colItems[0]! * COL_W : 0;
  const colPadR = virtualCols && colItems.length ? (keys.length - 1 - colItems[colItems.length - 1]!) * COL_W : 0;
  const rowPadT = virtualRows && rowItems.length ? rowItems[0]! * ROW_H : 0;
  const rowPadB = virtualRows && rowItems.length ? (t.states.length - 1 - rowItems[rowItems.length - 1]!) * ROW_H : 0;

  const pathIndex = useMemo(() => {
    const m = new Map<number, number>();
    path?.cells.forEach((c, i) => {
      const cell = c.state * cols + c.column;
      if (!m.has(cell)) m.set(cell, i + 1);
    });
    return m;
  }, [path, cols]);
  const pathLast = path && path.cells.length ? path.cells[path.cells.length - 1]! : null;

  const sel = selected && selected.state < t.states.length && selected.column < cols ? selected : { state: 0, column: columnsInOrder[0] ?? 0 };
  const selDisplay = displayOf.get(sel.column) ?? 0;

  // Keep the selected cell in view (virtualized or not).
  useEffect(() => {
    if (virtualCols) colV.scrollToIndex(selDisplay, { align: 'auto' });
    if (virtualRows) rowV.scrollToIndex(sel.state, { align: 'auto' });
    const el = scrollRef.current?.querySelector<HTMLElement>(`[data-cell="${sel.state}:${sel.column}"]`);
    el?.scrollIntoView?.({ block: 'nearest', inline: 'nearest' });
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [sel.state, sel.column]);

  const focusGrid = useCallback(() => gridRef.current?.focus({ preventScroll: true }), []);
  // closing a name menu hands focus back to the grid, so keyboard work goes on where it was
  const openOrCloseMenu = useCallback(
    (m: { kind: 'state' | 'input' | 'output'; index: number } | null) => {
      setMenu(m);
      if (!m) requestAnimationFrame(() => focusGrid());
    },
    [focusGrid],
  );

  const move = (dState: number, dCol: number) => {
    const s = Math.max(0, Math.min(t.states.length - 1, sel.state + dState));
    const d = Math.max(0, Math.min(keys.length - 1, selDisplay + dCol));
    onSelect({ state: s, column: columnsInOrder[d]! });
  };

  const currentText = () => {
    const cell = sel.state * cols + sel.column;
    const n = t.next[cell]!;
    if (n === NONE) return '';
    let bits = '';
    for (let k = 0; k < t.outputs.length; k++) bits += (t.outCare[cell]! >>> k) & 1 ? ((t.outValue[cell]! >>> k) & 1 ? '1' : '0') : '-';
    return t.outputs.length ? `${t.states[n]}/${bits}` : t.states[n]!;
  };

  const commit = (text: string, thenMove: [number, number] | null) => {
    const cell = sel.state * cols + sel.column;
    const r = parseCellInput(text, t, { next: t.next[cell]! });
    if ('error' in r) {
      setEditing((e) => (e ? { ...e, error: r.error } : e));
      return;
    }
    if (r.next === NONE) onEdit({ kind: 'clear-cell', state: sel.state, column: sel.column });
    else onEdit({ kind: 'set-cell', state: sel.state, column: sel.column, next: r.next, bits: r.bits });
    setEditing(null);
    if (thenMove) move(thenMove[0], thenMove[1]);
    focusGrid();
  };

  const onGridKey = (e: ReactKeyboardEvent<HTMLDivElement>) => {
    if (editing) return;
    const k = e.key;
    if (!readOnly && e.altKey && k === 'Enter') setMenu({ kind: 'state', index: sel.state });
    else if (!readOnly && e.altKey && (k === 'ArrowUp' || k === 'ArrowDown')) {
      const to = sel.state + (k === 'ArrowUp' ? -1 : 1);
      if (to >= 0 && to < t.states.length) {
        onEdit({ kind: 'move-state', from: sel.state, to });
        onSelect({ state: to, column: sel.column });
      }
    } else if (k === 'ArrowUp') move(-1, 0);
    else if (k === 'ArrowDown') move(1, 0);
    else if (k === 'ArrowLeft') move(0, -1);
    else if (k === 'ArrowRight') move(0, 1);
    else if (k === 'Home') onSelect({ state: sel.state, column: columnsInOrder[0]! });
    else if (k === 'End') onSelect({ state: sel.state, column: columnsInOrder[keys.length - 1]! });
    else if (readOnly) return;
    else if (k === 'Enter' || k === 'F2') setEditing({ text: currentText(), error: null, pick: 0 });
    else if (k === '-' || k === 'Delete' || k === 'Backspace') onEdit({ kind: 'clear-cell', state: sel.state, column: sel.column });
    else if (k === 's' && e.altKey) onEdit({ kind: 'set-next', state: sel.state, column: sel.column, next: sel.state });
    else if (k.length === 1 && !e.ctrlKey && !e.metaKey && !e.altKey && /[\p{L}\p{N}_/.]/u.test(k)) setEditing({ text: k, error: null, pick: 0 });
    else return;
    e.preventDefault();
  };

  const completions = useMemo(() => {
    if (!editing) return [];
    const namePart = editing.text.split('/')[0]!.trim().toLowerCase();
    if (editing.text.includes('/')) return [];
    return t.states.filter((s) => s.toLowerCase().startsWith(namePart)).slice(0, 8);
  }, [editing, t.states]);

  const onEditorKey = (e: ReactKeyboardEvent<HTMLInputElement>) => {
    if (!editing) return;
    if (e.key === 'Escape') {
      setEditing(null);
      focusGrid();
    } else if (e.key === 'ArrowDown' && completions.length) setEditing({ ...editing, pick: (editing.pick + 1) % completions.length });
    else if (e.key === 'ArrowUp' && completions.length) setEditing({ ...editing, pick: (editing.pick - 1 + completions.length) % completions.length });
    else if (e.key === 'Tab' && completions.length) {
      const name = completions[editing.pick] ?? completions[0]!;
      setEditing({ text: t.outputs.length ? `${name}/` : name, error: null, pick: 0 });
    } else if (e.key === 'Enter') {
      const typed = editing.text.trim();
      const exact = t.states.includes(typed.split('/')[0]!.trim());
      const text = !typed.includes('/') && !exact && completions.length && typed !== '-' ? completions[editing.pick] ?? typed : editing.text;
      commit(text, e.shiftKey ? [-1, 0] : [1, 0]);
    } else return;
    e.preventDefault();
  };

  const cellLabel = (s: number, c: number) => {
    const cell = s * cols + c;
    const n = t.next[cell]!;
    const key = keys[displayOf.get(c)!]!;
    const where = `${t.states[s]} at ${t.inputs.length ? t.inputs.map((x, i) => `${x}=${key[i]}`).join(' ') : 'no inputs'}`;
    if (n === NONE) return `${where}: unspecified`;
    const kind = n === s ? 'stable' : 'goes to';
    let bits = '';
    for (let k = 0; k < t.outputs.length; k++) {
      const care = (t.outCare[cell]! >>> k) & 1;
      bits += ` ${t.outputs[k]}=${care ? ((t.outValue[cell]! >>> k) & 1) : "don't care"}`;
    }
    return `${where}: ${kind === 'stable' ? `stable in ${t.states[n]}` : `goes to ${t.states[n]}`}${bits ? ',' + bits : ''}`;
  };

  const activeId = `cell-${sel.state}-${sel.column}`;

  return (
    <div className="flex flex-col gap-2 min-h-0" data-testid="flow-grid">
      <StructureBar table={t} readOnly={readOnly} onEdit={onEdit} menu={menu} setMenu={openOrCloseMenu} />
      {editError && (
        <p role="alert" className="q-alert q-alert-fault text-sm">
          <strong>Not applied:</strong> <span>{editError}</span>
        </p>
      )}
      <div
        ref={scrollRef}
        className="relative overflow-auto border border-line rounded-md bg-surface max-h-[62vh] max-w-full"
        style={{ height: Math.min(62 * 16, (t.states.length + 1) * ROW_H + 18), width: HEAD_W + keys.length * COL_W + 18 }}
      >
        <div
          ref={gridRef}
          role="grid"
          tabIndex={0}
          aria-label={`Flow table ${t.name}: ${t.states.length} states × ${keys.length} input columns`}
          aria-rowcount={t.states.length + 1}
          aria-colcount={keys.length + 1}
          aria-activedescendant={activeId}
          aria-readonly={readOnly}
          onKeyDown={onGridKey}
          className="font-mono text-sm outline-none focus-visible:ring-[3px] focus-visible:ring-focus rounded-md"
          style={{ width: HEAD_W + keys.length * COL_W }}
        >
          <div role="row" aria-rowindex={1} className="flex sticky top-0 z-20 bg-raised border-b border-line-strong" style={{ height: ROW_H }}>
            <div role="columnheader" className="sticky left-0 z-30 bg-raised border-r border-line-strong flex items-center px-2 text-xs text-ink-muted" style={{ width: HEAD_W, minWidth: HEAD_W }}>
              <span title="Column keys read left to right in this order">{t.inputs.length ? t.inputs.join(' ') : '(no inputs)'}</span>
            </div>
            {colPadL > 0 && <div style={{ width: colPadL, minWidth: colPadL }} aria-hidden="true" />}
            {colItems.map((d) => (
              <div key={d} role="columnheader" aria-colindex={d + 2} className="flex items-center justify-center border-r border-line font-medium" style={{ width: COL_W, minWidth: COL_W }} title={t.inputs.map((x, i) => `${x}=${keys[d]![i]}`).join(' ')}>
                {keys[d] || '·'}
              </div>
            ))}
            {colPadR > 0 && <div style={{ width: colPadR, minWidth: colPadR }} aria-hidden="true" />}
          </div>
          {rowPadT > 0 && <div style={{ height: rowPadT }} aria-hidden="true" />}
          {rowItems.map((s) => (
            <div key={s} role="row" aria-rowindex={s + 2} className="flex border-b border-line" style={{ height: ROW_H }}>
              <div role="rowheader" className="sticky left-0 z-10 bg-surface border-r border-line-strong flex items-center gap-1 px-1" style={{ width: HEAD_W, minWidth: HEAD_W }}>
                {readOnly ? (
                  <span className="truncate flex-1 px-1 py-0.5 font-medium" title={`${t.states[s]}${s === t.reset ? ' (reset state)' : ''}`} data-state-name={t.states[s]}>
                    {t.states[s]}
                  </span>
                ) : (
                  <button
                    type="button"
                    tabIndex={-1}
                    className="truncate text-left flex-1 px-1 py-0.5 rounded hover:bg-raised font-medium"
                    title={`${t.states[s]}${s === t.reset ? ' (reset state)' : ''}: click to rename, move or delete`}
                    onClick={() => setMenu({ kind: 'state', index: s })}
                    aria-label={`state ${t.states[s]}${s === t.reset ? ', reset state' : ''}: edit`}
                    data-state-name={t.states[s]}
                  >
                    {t.states[s]}
                  </button>
                )}
                {s === t.reset && (
                  <span className="q-badge text-[0.65rem] px-1" title="reset state: power-up settles from here">
                    reset
                  </span>
                )}
              </div>
              {colPadL > 0 && <div style={{ width: colPadL, minWidth: colPadL }} aria-hidden="true" />}
              {colItems.map((d) => {
                const c = columnsInOrder[d]!;
                const cell = s * cols + c;
                const n = t.next[cell]!;
                const isSel = s === sel.state && c === sel.column;
                const step = pathIndex.get(cell);
                const isPathEnd = pathLast !== null && pathLast.state === s && pathLast.column === c;
                const mark = marks?.get(cell);
                return (
                  <div
                    key={d}
                    id={`cell-${s}-${c}`}
                    role="gridcell"
                    aria-colindex={d + 2}
                    aria-selected={isSel}
                    aria-label={cellLabel(s, c)}
                    data-cell={`${s}:${c}`}
                    data-row={t.states[s]}
                    data-key={keys[d]}
                    data-text={n === NONE ? '-' : cellText(t, cell)}
                    data-kind={n === NONE ? 'unspecified' : n === s ? 'stable' : 'transient'}
                    onMouseDown={(e) => {
                      e.preventDefault();
                      onSelect({ state: s, column: c });
                      setEditing(null);
                      focusGrid();
                    }}
                    onDoubleClick={() => {
                      if (readOnly) return;
                      onSelect({ state: s, column: c });
                      const nn = t.next[cell]!;
                      setEditing({ text: nn === NONE ? '' : cellText(t, cell), error: null, pick: 0 });
                    }}
                    className={[
                      'relative flex items-center justify-center border-r border-line select-none cursor-cell',
                      n === NONE ? 'q-hatch text-ink-muted' : '',
                      step !== undefined ? (path?.end === 'fail' && isPathEnd ? 'bg-fault-soft' : 'bg-signal-soft') : '',
                      isSel ? 'outline outline-[3px] -outline-offset-[3px] outline-focus z-[5]' : '',
                    ].join(' ')}
                    style={{ width: COL_W, minWidth: COL_W }}
                  >
                    {isSel && editing ? (
                      <CellEditor
                        value={editing.text}
                        error={editing.error}
                        completions={completions}
                        pick={editing.pick}
                        onChange={(text) => setEditing({ text, error: null, pick: 0 })}
                        onKeyDown={onEditorKey}
                        onBlur={() => setEditing(null)}
                        onPick={(name) => commit(t.outputs.length ? `${name}/${editing.text.split('/')[1] ?? ''}`.replace(/\/$/, '') : name, null)}
                      />
                    ) : (
                      <CellFace table={t} cell={cell} state={s} width={COL_W} />
                    )}
                    {step !== undefined && (
                      <span className="absolute left-0.5 top-0 text-[0.6rem] font-semibold text-signal-strong" aria-hidden="true">
                        {isPathEnd ? (path?.end === 'fail' ? '✕' : '■') : step}
                      </span>
                    )}
                    {mark && (
                      <span
                        className={`absolute right-0.5 top-0 text-[0.65rem] font-bold ${mark === 'error' ? 'text-fault' : mark === 'warning' ? 'text-caution' : 'text-note'}`}
                        aria-hidden="true"
                        title={`${mark} finding here`}
                      >
                        {mark === 'error' ? '!' : mark === 'warning' ? '▲' : '•'}
                      </span>
                    )}
                  </div>
                );
              })}
              {colPadR > 0 && <div style={{ width: colPadR, minWidth: colPadR }} aria-hidden="true" />}
            </div>
          ))}
          {rowPadB > 0 && <div style={{ height: rowPadB }} aria-hidden="true" />}
        </div>
      </div>
      <GridLegend readOnly={readOnly} />
      {!readOnly && (
        <div className="flex flex-wrap gap-2">
          <button
            type="button"
            className="q-btn q-btn-small"
            onClick={() => onEdit({ kind: 'add-state', name: proposeName('s', t.states), at: sel.state + 1 })}
            title="Insert a state below the selected row"
          >
            + state
          </button>
          <button type="button" className="q-btn q-btn-small" onClick={() => onEdit({ kind: 'set-next', state: sel.state, column: sel.column, next: sel.state })} title="Make the selected cell stable (Alt+S)">
            Make stable
          </button>
          <button type="button" className="q-btn q-btn-small" onClick={() => onEdit({ kind: 'clear-cell', state: sel.state, column: sel.column })} title="Clear the selected cell (-)">
            Clear cell
          </button>
          <button
            type="button"
            className="q-btn q-btn-small"
            onClick={() => {
              const edits: TableEdit[] = [];
              for (const c of columnsInOrder) if (t.next[sel.state * cols + c] === NONE) edits.push({ kind: 'set-next', state: sel.state, column: c, next: sel.state });
              if (edits.length) onEdits(edits, `fill row ${t.states[sel.state]} with stable cells`);
            }}
            title="Make every unspecified cell of the selected row stable"
          >
            Fill row stable
          </button>
        </div>
      )}
    </div>
  );
}

function cellText(t: FlowTable, cell: number): string {
  const n = t.next[cell]!;
  if (n === NONE) return '';
  let bits = '';
  for (let k = 0; k < t.outputs.length; k++) bits += (t.outCare[cell]! >>> k) & 1 ? ((t.outValue[cell]! >>> k) & 1 ? '1' : '0') : '-';
  return t.outputs.length ? `${t.states[n]}/${bits}` : t.states[n]!;
}

/** How one cell reads: ring for stable, plain for transient, hatch and a dot for unspecified. */
function CellFace({ table: t, cell, state, width }: { table: FlowTable; cell: number; state: number; width: number }) {
  const n = t.next[cell]!;
  if (n === NONE) return <span aria-hidden="true">·</span>;
  const stable = n === state;
  const bits: { ch: string; care: boolean }[] = [];
  for (let k = 0; k < t.outputs.length; k++) {
    const care = ((t.outCare[cell]! >>> k) & 1) === 1;
    bits.push({ ch: care ? ((t.outValue[cell]! >>> k) & 1 ? '1' : '0') : '–', care });
  }
  return (
    <span className="flex items-center gap-0.5 max-w-full px-1" aria-hidden="true">
      <span className={`truncate ${stable ? 'rounded-full border-2 border-settle px-1.5 font-semibold text-settle' : 'px-0.5'}`} style={{ maxWidth: width - 16 - 8.6 * (t.outputs.length + 1) }}>
        {t.states[n]}
      </span>
      {bits.length > 0 && (
        <span className="text-xs whitespace-nowrap">
          /
          {bits.map((b, i) => (
            <span key={i} className={b.care ? '' : 'text-ink-muted'}>
              {b.ch}
            </span>
          ))}
        </span>
      )}
    </span>
  );
}

function CellEditor(props: {
  value: string;
  error: string | null;
  completions: string[];
  pick: number;
  onChange: (v: string) => void;
  onKeyDown: (e: ReactKeyboardEvent<HTMLInputElement>) => void;
  onBlur: () => void;
  onPick: (name: string) => void;
}) {
  const ref = useRef<HTMLInputElement>(null);
  useEffect(() => {
    const el = ref.current;
    if (!el) return;
    el.focus();
    el.setSelectionRange(el.value.length, el.value.length);
  }, []);
  return (
    <div className="absolute inset-0 z-40" onMouseDown={(e) => e.stopPropagation()}>
      <input
        ref={ref}
        value={props.value}
        onChange={(e) => props.onChange(e.target.value)}
        onKeyDown={props.onKeyDown}
        onBlur={props.onBlur}
        aria-label="Cell: next state, then / and output bits (0, 1 or - for don't care); Enter to apply, Escape to cancel"
        aria-invalid={props.error ? true : undefined}
        aria-autocomplete="list"
        aria-controls="grid-completions"
        className="w-full h-full px-1.5 font-mono text-sm bg-surface text-ink border-2 border-focus outline-none"
        spellCheck={false}
        autoComplete="off"
        data-testid="cell-editor"
      />
      {(props.completions.length > 0 || props.error) && (
        <div className="absolute left-0 top-full mt-0.5 min-w-[12rem] q-card p-1 text-sm z-50">
          {props.error && (
            <p className="text-fault px-1 py-0.5" role="alert">
              {props.error}
            </p>
          )}
          {props.completions.length > 0 && (
            <ul id="grid-completions" role="listbox" aria-label="Matching states">
              {props.completions.map((c, i) => (
                <li
                  key={c}
                  role="option"
                  aria-selected={i === props.pick}
                  className={`px-1.5 py-0.5 rounded cursor-pointer ${i === props.pick ? 'bg-signal-soft text-ink' : ''}`}
                  onMouseDown={(e) => {
                    e.preventDefault();
                    props.onPick(c);
                  }}
                >
                  {c}
                </li>
              ))}
            </ul>
          )}
          <p className="text-xs text-ink-muted px-1 pt-0.5">Tab completes · Enter applies · Esc cancels</p>
        </div>
      )}
    </div>
  );
}

function GridLegend({ readOnly }: { readOnly: boolean }) {
  return (
    <div className="flex flex-wrap items-center gap-x-4 gap-y-1 text-xs text-ink-muted" aria-label="Legend">
      <span className="flex items-center gap-1">
        <span className="rounded-full border-2 border-settle px-1.5 font-mono font-semibold text-settle">a</span> stable (ringed)
      </span>
      <span className="flex items-center gap-1">
        <span className="font-mono px-1">b</span> transient: moves on to b
      </span>
      <span className="flex items-center gap-1">
        <span className="q-hatch font-mono px-2 border border-line">·</span> unspecified
      </span>
      <span className="flex items-center gap-1">
        <span className="font-mono">/1–</span> output bits, – = don't care
      </span>
      <span className="flex items-center gap-1">
        <span className="font-mono text-fault font-bold">!</span> error · <span className="font-mono text-caution font-bold">▲</span> warning · <span className="font-mono text-note font-bold">•</span> note
      </span>
      {!readOnly && <span>Keys: arrows move · type a state name · Enter edits · - clears · Alt+S stable · Alt+Enter state menu · Alt+↑/↓ move row · Ctrl+Z undo</span>}
    </div>
  );
}

/** The bar above the grid listing inputs and outputs, with rename/move/delete menus. */
function StructureBar(props: {
  table: FlowTable;
  readOnly: boolean;
  onEdit: (e: TableEdit) => void;
  menu: { kind: 'state' | 'input' | 'output'; index: number } | null;
  setMenu: (m: { kind: 'state' | 'input' | 'output'; index: number } | null) => void;
}) {
  const { table: t, readOnly, onEdit, menu, setMenu } = props;
  const group = (kind: 'input' | 'output', names: string[]) => (
    <div className="flex flex-wrap items-center gap-1.5" role="group" aria-label={`${kind}s`}>
      <span className="text-xs font-semibold uppercase tracking-wide text-ink-muted w-16">{kind}s</span>
      {names.length === 0 && <span className="text-xs text-ink-muted">none</span>}
      {names.map((n, i) =>
        readOnly ? (
          <span key={`${n}-${i}`} className="q-badge font-mono">
            <span className="text-ink-muted">{kind === 'input' ? `x${i}` : `y${i}`}</span> {n}
          </span>
        ) : (
          <button
            key={`${n}-${i}`}
            type="button"
            className="q-badge font-mono hover:bg-surface"
            onClick={() => setMenu({ kind, index: i })}
            title={`${kind} ${n}: rename, move or delete`}
            aria-label={`${kind} ${n}, edit`}
          >
            <span className="text-ink-muted">{kind === 'input' ? `x${i}` : `y${i}`}</span> {n}
          </button>
        ),
      )}
      {!readOnly && (
        <button
          type="button"
          className="q-btn q-btn-quiet q-btn-small"
          onClick={() => onEdit({ kind: kind === 'input' ? 'add-input' : 'add-output', name: proposeName(kind === 'input' ? 'in' : 'out', names) })}
          aria-label={`add ${kind}`}
        >
          + {kind}
        </button>
      )}
    </div>
  );
  return (
    <div className="flex flex-col gap-1">
      {group('input', t.inputs)}
      {group('output', t.outputs)}
      {menu && !readOnly && <NameMenu table={t} menu={menu} onEdit={onEdit} onClose={() => setMenu(null)} />}
    </div>
  );
}

/** Rename / move / delete form for one state, input or output. */
function NameMenu(props: { table: FlowTable; menu: { kind: 'state' | 'input' | 'output'; index: number }; onEdit: (e: TableEdit) => void; onClose: () => void }) {
  const { table: t, menu, onEdit, onClose } = props;
  const list = menu.kind === 'state' ? t.states : menu.kind === 'input' ? t.inputs : t.outputs;
  const name = list[menu.index] ?? '';
  const [draft, setDraft] = useState(name);
  const ref = useRef<HTMLInputElement>(null);
  useEffect(() => {
    setDraft(name);
    ref.current?.focus();
    ref.current?.select();
  }, [name, menu.kind, menu.index]);
  const problem = draft === name ? null : checkName(draft, list, menu.kind, menu.index);
  const kindCap = menu.kind === 'state' ? 'State' : menu.kind === 'input' ? 'Input' : 'Output';
  const act = (e: TableEdit, close = true) => {
    onEdit(e);
    if (close) onClose();
  };
  const last = list.length - 1;
  const moveKind = `move-${menu.kind}` as const;
  const delKind = `delete-${menu.kind}` as const;
  return (
    <form
      className="q-card p-3 flex flex-wrap items-end gap-2 text-sm"
      role="dialog"
      aria-label={`${kindCap} ${name}`}
      onSubmit={(e) => {
        e.preventDefault();
        if (problem) return;
        if (draft !== name) act({ kind: `rename-${menu.kind}`, index: menu.index, name: draft } as TableEdit);
        else onClose();
      }}
      onKeyDown={(e) => {
        if (e.key === 'Escape') {
          e.preventDefault();
          onClose();
        }
      }}
    >
      <label className="flex flex-col">
        <span className="q-label">
          {kindCap} name
        </span>
        <input ref={ref} className="q-input font-mono w-48" value={draft} onChange={(e) => setDraft(e.target.value)} aria-invalid={problem ? true : undefined} spellCheck={false} />
      </label>
      <button type="submit" className="q-btn q-btn-primary q-btn-small" disabled={!!problem}>
        Rename
      </button>
      <button type="button" className="q-btn q-btn-small" disabled={menu.index === 0} onClick={() => act({ kind: moveKind, from: menu.index, to: menu.index - 1 } as TableEdit, false)}>
        {menu.kind === 'state' ? '↑ Up' : '← Left'}
      </button>
      <button type="button" className="q-btn q-btn-small" disabled={menu.index === last} onClick={() => act({ kind: moveKind, from: menu.index, to: menu.index + 1 } as TableEdit, false)}>
        {menu.kind === 'state' ? '↓ Down' : '→ Right'}
      </button>
      {menu.kind === 'state' && (
        <>
          <button type="button" className="q-btn q-btn-small" disabled={t.reset === menu.index} onClick={() => act({ kind: 'set-reset', index: menu.index })}>
            Make reset
          </button>
          <button type="button" className="q-btn q-btn-small" onClick={() => act({ kind: 'add-state', name: proposeName('s', t.states), at: menu.index + 1 })}>
            Insert below
          </button>
        </>
      )}
      <button
        type="button"
        className="q-btn q-btn-danger q-btn-small"
        disabled={menu.kind === 'state' && t.states.length <= 1}
        onClick={() => act({ kind: delKind, index: menu.index } as TableEdit)}
        title={menu.kind === 'input' ? 'Deleting an input keeps the half of the table where it is 0' : undefined}
      >
        Delete
      </button>
      <button type="button" className="q-btn q-btn-quiet q-btn-small" onClick={onClose}>
        Close
      </button>
      {problem && (
        <p className="w-full text-fault text-xs" role="alert">
          {problem}
        </p>
      )}
    </form>
  );
}
