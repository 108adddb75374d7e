/**
 * The controller workbench island: one model (workbench-store) edited through the table grid
 * and the source editor, live findings beside them, and the map, run, reduce, fill, build and
 * settings views. Saves create revisions on a named base; drafts live in localStorage.
 */
import { lazy, Suspense, useCallback, useEffect, useMemo, useRef, useState } from 'react';
import { QueryRoot } from '../../lib/client/query-client';
import { useLiveAnalysis } from '../../lib/client/live-analysis';
import { useRevision, useSaveRevision } from '../../lib/client/queries';
import { ApiClientError } from '../../lib/client/api';
import { clearDraft, listDrafts, readDraft, writeDraft } from '../../lib/client/drafts';
import { reapplyEdits, type ReapplyResult } from '../../lib/client/reapply';
import { useWorkbenchStore } from '../../lib/client/workbench-store';
import type { TableEdit } from '../../lib/client/table-edits';
import { findingToKey, type Finding, type Fix } from '../../lib/engine/findings';
import { fillOutputs } from '../../lib/engine/fill';
import { parseText } from '../../lib/engine/formats/text';
import { countColumns, createTable, keyToColumn, type FlowTable } from '../../lib/engine/model';
import FlowGrid, { type GridCell, type GridPath } from './FlowGrid';
import FindingsPanel from './FindingsPanel';
import Simulator from './Simulator';
import ReducePanel from './ReducePanel';
import FillPanel from './FillPanel';
import SettingsPanel from './SettingsPanel';
import './workbench.css';

const SourceEditor = lazy(() => import('./SourceEditor'));
const GeneratePanel = lazy(() => import('./GeneratePanel'));
const StateDiagram = lazy(() => import('./StateDiagram'));

/** The views of the workbench, in tab order (Alt+1 … Alt+8). */
export const VIEWS = [
  { id: 'table', label: 'Table' },
  { id: 'source', label: 'Source' },
  { id: 'map', label: 'Map' },
  { id: 'run', label: 'Run' },
  { id: 'reduce', label: 'Reduce' },
  { id: 'fill', label: 'Fill' },
  { id: 'build', label: 'Build' },
  { id: 'settings', label: 'Settings' },
] as const;

/** One of VIEWS. */
export type ViewId = (typeof VIEWS)[number]['id'];

/** Props given by the controller page. */
export interface WorkbenchProps {
  workspace: string;
  controller: { slug: string; name: string };
  /** The revision opened (the head unless the page asked for another), or null for none. */
  revision: { number: number; source: string } | null;
  /** The controller's newest revision number. */
  head: number;
  canEdit: boolean;
  role: string;
}

/** The island entry: wraps the workbench in the page's query client. */
export default function Workbench(props: WorkbenchProps) {
  return (
    <QueryRoot>
      <WorkbenchInner {...props} />
    </QueryRoot>
  );
}

function safeParse(source: string, fallbackName: string): FlowTable {
  try {
    return parseText(source);
  } catch {
    return createTable({ name: fallbackName.replace(/[^A-Za-z0-9_]/g, '_') || 'controller', inputs: ['in1'], outputs: ['out1'], states: ['idle'] });
  }
}

function WorkbenchInner({ workspace, controller, revision, head, canEdit, role }: WorkbenchProps) {
  const initialSource = revision?.source ?? '';
  const [base, setBase] = useState<number>(revision?.number ?? 0);
  const [baseSource, setBaseSource] = useState<string>(initialSource);
  const [state, dispatch] = useWorkbenchStore(safeParse(initialSource, controller.slug));
  const readOnly = !canEdit;
  const [view, setView] = useState<ViewId>('table');
  const [visited, setVisited] = useState<Set<ViewId>>(() => new Set(['table']));
  const [selected, setSelected] = useState<GridCell | null>(null);
  const [selectedFinding, setSelectedFinding] = useState<Finding | null>(null);
  const [path, setPath] = useState<GridPath | null>(null);
  const [saveOpen, setSaveOpen] = useState(false);
  const [conflict, setConflict] = useState<{ head: number; message: string } | null>(null);
  const [notice, setNotice] = useState<{ kind: 'ok' | 'note' | 'fault'; text: string } | null>(null);
  const [draftInfo, setDraftInfo] = useState<{ savedAt: string; base: number } | null>(null);
  const [headNow, setHeadNow] = useState(head);
  const t = state.table;
  const live = useLiveAnalysis(t, state.version);
  const findings = live.analysis?.findings ?? [];
  const valid = state.sourceIssues.length === 0;

  const showView = useCallback((v: ViewId) => {
    setView(v);
    setVisited((s) => (s.has(v) ? s : new Set([...s, v])));
  }, []);

  // Restore a local draft on this base (or an older one) once, at start.
  useEffect(() => {
    if (readOnly) return;
    const here = readDraft(workspace, controller.slug, base);
    if (here && here.source !== initialSource) {
      dispatch({ type: 'load', table: safeParse(here.source, controller.slug), source: here.source, dirty: true });
      setDraftInfo({ savedAt: here.savedAt, base });
      return;
    }
    const older = listDrafts(workspace, controller.slug).find((d) => d.base < base);
    if (older) setDraftInfo({ savedAt: older.savedAt, base: older.base });
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, []);

  // Keep the draft current while there are unsaved edits.
  useEffect(() => {
    if (readOnly || !state.dirty) return;
    const id = setTimeout(() => writeDraft(workspace, controller.slug, base, state.source), 300);
    return () => clearTimeout(id);
  }, [state.source, state.dirty, base, readOnly, workspace, controller.slug]);

  // Warn before leaving with unsaved edits (they stay in the draft anyway).
  useEffect(() => {
    const h = (e: BeforeUnloadEvent) => {
      if (state.dirty && !readOnly) {
        writeDraft(workspace, controller.slug, base, state.source);
        e.preventDefault();
      }
    };
    window.addEventListener('beforeunload', h);
    return () => window.removeEventListener('beforeunload', h);
  }, [state.dirty, state.source, base, readOnly, workspace, controller.slug]);

  const onEdit = useCallback((e: TableEdit) => dispatch({ type: 'edit', edit: e }), [dispatch]);
  const onEdits = useCallback((edits: TableEdit[], label: string) => dispatch({ type: 'edits', edits, label }), [dispatch]);

  const marks = useMemo(() => {
    const m = new Map<number, 'error' | 'warning' | 'info'>();
    const cols = countColumns(t.inputs.length);
    const rank = { error: 0, warning: 1, info: 2 } as const;
    for (const f of findings) {
      if (!f.state || f.inputs === undefined) continue;
      const s = t.states.indexOf(f.state);
      if (s < 0 || f.inputs.length !== t.inputs.length) continue;
      const cell = s * cols + keyToColumn(f.inputs);
      const prev = m.get(cell);
      if (!prev || rank[f.severity] < rank[prev]) m.set(cell, f.severity);
    }
    return m;
  }, [findings, t]);

  const selectFinding = (f: Finding) => {
    setSelectedFinding(f);
    const cells: GridCell[] = [];
    for (const p of f.path) {
      const s = t.states.indexOf(p.state);
      if (s >= 0 && p.inputs.length === t.inputs.length) cells.push({ state: s, column: keyToColumn(p.inputs) });
    }
    const last = f.path[f.path.length - 1];
    const ends = last?.kind === 'stable' && f.code !== 'output-glitch' && f.code !== 'order-dependent-double-change';
    setPath(cells.length ? { cells, end: ends ? 'stable' : 'fail' } : null);
    const target = cells[cells.length - 1] ?? (f.state && t.states.includes(f.state) ? { state: t.states.indexOf(f.state), column: f.inputs !== undefined && f.inputs.length === t.inputs.length ? keyToColumn(f.inputs) : 0 } : null);
    if (target) setSelected(target);
    if (view !== 'table' && view !== 'map' && view !== 'source') showView('table');
  };

  const applyFix = (f: Finding, fix: Fix) => {
    if (fix.action === 'fill-outputs') {
      const r = fillOutputs(t);
      dispatch({ type: 'replace', table: r.table, label: `fill ${r.assignments.length} don't-care outputs` });
      setNotice({ kind: 'ok', text: `Filled ${r.assignments.length} don't-care output${r.assignments.length === 1 ? '' : 's'}.` });
    } else if (fix.action === 'add-cell' && fix.state && fix.inputs !== undefined && fix.next) {
      const s = t.states.indexOf(fix.state);
      const n = t.states.indexOf(fix.next);
      if (s >= 0 && n >= 0) {
        onEdit({ kind: 'set-next', state: s, column: keyToColumn(fix.inputs), next: n });
        setSelected({ state: s, column: keyToColumn(fix.inputs) });
        setNotice({ kind: 'ok', text: `${fix.label}: done. Check its output bits.` });
      }
    } else if (fix.action === 'remove-state' && fix.state) {
      const s = t.states.indexOf(fix.state);
      if (s >= 0) onEdit({ kind: 'delete-state', index: s });
    }
    setSelectedFinding(null);
    setPath(null);
    void f;
  };

  // Keyboard paths: Alt+1…8 views, Ctrl+Z / Ctrl+Shift+Z / Ctrl+Y undo and redo, Ctrl+S save.
  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      const el = e.target as HTMLElement | null;
      const inEditor = !!el?.closest('.monaco-editor');
      const inField = !!el && (el.tagName === 'INPUT' || el.tagName === 'TEXTAREA' || el.tagName === 'SELECT');
      if (e.altKey && !e.ctrlKey && !e.metaKey && /^[1-8]$/.test(e.key)) {
        e.preventDefault();
        showView(VIEWS[Number(e.key) - 1]!.id);
        return;
      }
      const mod = e.ctrlKey || e.metaKey;
      if (!mod) return;
      if (e.key.toLowerCase() === 's') {
        e.preventDefault();
        if (!readOnly) setSaveOpen(true);
        return;
      }
      if (inEditor || inField || readOnly) return;
      if (e.key.toLowerCase() === 'z' && !e.shiftKey) {
        e.preventDefault();
        dispatch({ type: 'undo' });
      } else if ((e.key.toLowerCase() === 'z' && e.shiftKey) || e.key.toLowerCase() === 'y') {
        e.preventDefault();
        dispatch({ type: 'redo' });
      }
    };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, [dispatch, readOnly, showView]);

  const save = useSaveRevision(workspace, controller.slug);
  const doSave = (message: string) => {
    if (!valid) {
      setNotice({ kind: 'fault', text: 'The source has errors; fix them before saving.' });
      return;
    }
    save.mutate(
      { base, source: state.source, message },
      {
        onSuccess: ({ revision: r }) => {
          clearDraft(workspace, controller.slug, base);
          setBase(r.number);
          setHeadNow(r.number);
          setBaseSource(r.source);
          dispatch({ type: 'load', table: parseText(r.source), source: r.source });
          setSaveOpen(false);
          setConflict(null);
          setDraftInfo(null);
          setNotice({ kind: 'ok', text: `Saved as r${r.number} (${r.findings.error} errors, ${r.findings.warning} warnings).` });
          const url = new URL(window.location.href);
          url.searchParams.delete('rev');
          window.history.replaceState(null, '', url);
        },
        onError: (e) => {
          if (e instanceof ApiClientError && e.status === 409 && typeof e.detail.head === 'number') {
            writeDraft(workspace, controller.slug, base, state.source);
            setConflict({ head: e.detail.head, message });
            setSaveOpen(false);
          } else setNotice({ kind: 'fault', text: e instanceof Error ? e.message : String(e) });
        },
      },
    );
  };

  const tabRefs = useRef<(HTMLButtonElement | null)[]>([]);
  const onTabKey = (e: React.KeyboardEvent, i: number) => {
    const d = e.key === 'ArrowRight' ? 1 : e.key === 'ArrowLeft' ? -1 : 0;
    if (!d) return;
    e.preventDefault();
    const j = (i + d + VIEWS.length) % VIEWS.length;
    showView(VIEWS[j]!.id);
    tabRefs.current[j]?.focus();
  };

  const revisionLabel = state.dirty || base === 0 ? 'draft' : `r${base}`;
  const reachable = useMemo(() => (live.analysis ? new Set(live.analysis.reachable) : undefined), [live.analysis]);
  const mapPath = selectedFinding ? selectedFinding.path.map((p) => ({ state: p.state, inputs: p.inputs })) : path ? path.cells.map((c) => ({ state: t.states[c.state]!, inputs: '' })) : null;

  if (conflict)
    return (
      <ConflictScreen
        workspace={workspace}
        controller={controller.slug}
        base={base}
        head={conflict.head}
        baseSource={baseSource}
        mine={t}
        mySource={state.source}
        onReapply={(merged, headSource, r) => {
          setBase(conflict.head);
          setHeadNow(conflict.head);
          setBaseSource(headSource);
          dispatch({ type: 'load', table: merged, dirty: true });
          setConflict(null);
          setNotice({ kind: r.conflicts.length ? 'note' : 'ok', text: `Reapplied ${r.applied} edit${r.applied === 1 ? '' : 's'} onto r${conflict.head}${r.conflicts.length ? `; ${r.conflicts.length} cell${r.conflicts.length === 1 ? '' : 's'} had changed on both sides and now hold your value` : ''}. Review, then save.` });
        }}
        onKeepMine={(headSource) => {
          setBase(conflict.head);
          setHeadNow(conflict.head);
          setBaseSource(headSource);
          dispatch({ type: 'load', table: t, source: state.source, dirty: true });
          setConflict(null);
          setNotice({ kind: 'note', text: `Your whole table now sits on r${conflict.head}; saving it replaces the changes made there.` });
        }}
        onBack={() => setConflict(null)}
      />
    );

  return (
    <div className="flex flex-col gap-3" data-testid="workbench" data-role={role}>
      <header className="flex flex-wrap items-center gap-2">
        <h1 className="text-xl font-semibold mr-2">{controller.name}</h1>
        <span className="q-badge font-mono" title="The revision these edits start from" data-testid="base-revision">
          {base ? `r${base}` : 'no revision'}
          {headNow > base ? ` (newest r${headNow})` : ''}
        </span>
        {state.dirty && !readOnly && (
          <span className="q-badge q-badge-caution" data-testid="dirty-badge">
            ● unsaved edits (kept as a local draft)
          </span>
        )}
        {readOnly && <span className="q-badge">read only ({role})</span>}
        <span className="flex-1" />
        {!readOnly && (
          <>
            <button type="button" className="q-btn q-btn-small" onClick={() => dispatch({ type: 'undo' })} disabled={!state.past.length} title={state.past.length ? `Undo ${state.past[state.past.length - 1]!.label} (Ctrl+Z)` : 'Nothing to undo'} aria-keyshortcuts="Control+Z">
              ↶ Undo
            </button>
            <button type="button" className="q-btn q-btn-small" onClick={() => dispatch({ type: 'redo' })} disabled={!state.future.length} title={state.future.length ? `Redo ${state.future[0]!.label} (Ctrl+Shift+Z)` : 'Nothing to redo'} aria-keyshortcuts="Control+Shift+Z">
              ↷ Redo
            </button>
            <button type="button" className="q-btn q-btn-primary q-btn-small" onClick={() => setSaveOpen(true)} disabled={!valid || (!state.dirty && base > 0)} title={!state.dirty && base > 0 ? 'No unsaved edits' : 'Save a new revision (Ctrl+S)'} aria-keyshortcuts="Control+S" data-testid="save-open">
              Save revision…
            </button>
          </>
        )}
      </header>

      {draftInfo && !readOnly && (
        <div className="q-alert q-alert-note text-sm flex flex-wrap items-center gap-2" role="status">
          {draftInfo.base === base ? (
            <span>Restored your unsaved draft from {new Date(draftInfo.savedAt).toLocaleString()}.</span>
          ) : (
            <span>You have an unsaved draft from r{draftInfo.base} ({new Date(draftInfo.savedAt).toLocaleString()}).</span>
          )}
          {draftInfo.base !== base && (
            <button
              type="button"
              className="q-btn q-btn-small"
              onClick={() => {
                const d = readDraft(workspace, controller.slug, draftInfo.base);
                if (!d) return;
                setBase(draftInfo.base);
                dispatch({ type: 'load', table: safeParse(d.source, controller.slug), source: d.source, dirty: true });
                setNotice({ kind: 'note', text: `Opened your draft on r${draftInfo.base}. Saving will offer to reapply it onto r${headNow}.` });
                setDraftInfo(null);
              }}
            >
              Open that draft
            </button>
          )}
          <button
            type="button"
            className="q-btn q-btn-small q-btn-quiet"
            onClick={() => {
              clearDraft(workspace, controller.slug, draftInfo.base);
              if (draftInfo.base === base) dispatch({ type: 'load', table: safeParse(baseSource, controller.slug), source: baseSource });
              setDraftInfo(null);
            }}
          >
            Discard draft
          </button>
        </div>
      )}
      {notice && (
        <div className={`q-alert q-alert-${notice.kind} text-sm flex items-center gap-2`} role="status" data-testid="notice">
          <span className="flex-1">{notice.text}</span>
          <button type="button" className="q-btn q-btn-quiet q-btn-small" onClick={() => setNotice(null)} aria-label="Dismiss">
            ✕
          </button>
        </div>
      )}
      {saveOpen && !readOnly && <SaveDialog busy={save.isPending} base={base} onCancel={() => setSaveOpen(false)} onSave={doSave} />}

      <div className="grid gap-4 lg:grid-cols-[minmax(0,1fr)_22rem]">
        <div className="min-w-0 flex flex-col gap-3">
          <div role="tablist" aria-label="Workbench views" className="q-tabs">
            {VIEWS.map((v, i) => (
              <button
                key={v.id}
                ref={(el) => {
                  tabRefs.current[i] = el;
                }}
                type="button"
                role="tab"
                id={`tab-${v.id}`}
                aria-selected={view === v.id}
                aria-controls={`view-${v.id}`}
                tabIndex={view === v.id ? 0 : -1}
                className="q-tab"
                aria-current={view === v.id ? 'page' : undefined}
                onClick={() => showView(v.id)}
                onKeyDown={(e) => onTabKey(e, i)}
                aria-keyshortcuts={`Alt+${i + 1}`}
                title={`${v.label} (Alt+${i + 1})`}
              >
                {v.label}
                {v.id === 'source' && state.sourceIssues.length > 0 && <span className="ml-1 text-fault font-bold">!</span>}
              </button>
            ))}
          </div>

          <div role="tabpanel" id="view-table" aria-labelledby="tab-table" hidden={view !== 'table'}>
            <FlowGrid table={t} readOnly={readOnly} selected={selected} onSelect={setSelected} onEdit={onEdit} onEdits={onEdits} marks={marks} path={path} editError={state.editError} />
          </div>
          {visited.has('source') && (
            <div role="tabpanel" id="view-source" aria-labelledby="tab-source" hidden={view !== 'source'}>
              <Suspense fallback={<p className="text-sm text-ink-muted">Loading the source editor…</p>}>
                <SourceEditor source={state.source} table={t} issues={state.sourceIssues} findings={findings} readOnly={readOnly} onChange={(text) => dispatch({ type: 'source', text })} path={`${workspace}/${controller.slug}`} />
              </Suspense>
              {state.sourceIssues.length > 0 && (
                <ul className="mt-2 text-sm flex flex-col gap-1" aria-label="Source problems" data-testid="source-issues">
                  {state.sourceIssues.slice(0, 10).map((i, k) => (
                    <li key={k} className="text-fault">
                      <span className="font-mono">{i.where}</span> {i.message}
                      {i.hint ? <span className="text-ink-muted"> — {i.hint}</span> : null}
                    </li>
                  ))}
                  <li className="text-ink-muted text-xs">The table keeps its last valid version until the source parses again.</li>
                </ul>
              )}
            </div>
          )}
          {view === 'map' && (
            <div role="tabpanel" id="view-map" aria-labelledby="tab-map">
              <Suspense fallback={<p className="text-sm text-ink-muted">Loading the map…</p>}>
                <StateDiagram table={t} {...(reachable ? { reachable } : {})} path={mapPath} onSelectState={(s) => setSelected({ state: s, column: selected?.column ?? 0 })} />
              </Suspense>
            </div>
          )}
          <div role="tabpanel" id="view-run" aria-labelledby="tab-run" hidden={view !== 'run'}>
            {visited.has('run') && (
              <div className="flex flex-col gap-3">
                <Simulator table={t} readOnly={readOnly} onEdit={onEdit} onPath={(cells, failed) => setPath(cells ? { cells, end: failed ? 'fail' : 'stable' } : null)} />
                <details className="text-sm">
                  <summary className="cursor-pointer text-ink-muted">Show the table with the settle path</summary>
                  <div className="mt-2">
                    <FlowGrid table={t} readOnly selected={selected} onSelect={setSelected} onEdit={onEdit} onEdits={onEdits} marks={marks} path={path} />
                  </div>
                </details>
              </div>
            )}
          </div>
          {view === 'reduce' && (
            <div role="tabpanel" id="view-reduce" aria-labelledby="tab-reduce">
              <ReducePanel
                table={t}
                readOnly={readOnly}
                onApply={(reduced, label) => {
                  dispatch({ type: 'replace', table: reduced, label });
                  setNotice({ kind: 'ok', text: `Applied as a new draft: ${label}. Save it to make a revision.` });
                  showView('table');
                }}
              />
            </div>
          )}
          {view === 'fill' && (
            <div role="tabpanel" id="view-fill" aria-labelledby="tab-fill">
              <FillPanel
                table={t}
                readOnly={readOnly}
                onApply={(filled, label) => {
                  dispatch({ type: 'replace', table: filled, label });
                  setNotice({ kind: 'ok', text: `${label}: applied.` });
                }}
                onShowCell={(s, inputs) => {
                  const i = t.states.indexOf(s);
                  if (i >= 0) setSelected({ state: i, column: keyToColumn(inputs) });
                  showView('table');
                }}
              />
            </div>
          )}
          {view === 'build' && (
            <div role="tabpanel" id="view-build" aria-labelledby="tab-build">
              <Suspense fallback={<p className="text-sm text-ink-muted">Loading…</p>}>
                <GeneratePanel workspace={workspace} controller={controller.slug} table={t} source={state.source} findings={findings} revisionLabel={revisionLabel} valid={valid} />
              </Suspense>
            </div>
          )}
          {view === 'settings' && (
            <div role="tabpanel" id="view-settings" aria-labelledby="tab-settings">
              <SettingsPanel table={t} readOnly={readOnly} onEdit={onEdit} />
            </div>
          )}
        </div>

        <aside aria-label="Findings" className="flex flex-col gap-2 lg:max-h-[80vh] lg:overflow-auto lg:sticky lg:top-2">
          <h2 className="text-base font-semibold flex items-center gap-2">
            Findings
            {live.analysis && (
              <span className="text-xs font-normal text-ink-muted">
                {live.analysis.reachable.length}/{t.states.length} states reachable · {live.analysis.stable.length} stable total states
              </span>
            )}
          </h2>
          <FindingsPanel
            findings={findings}
            selectedKey={selectedFinding ? findingToKey(selectedFinding) : null}
            onSelect={selectFinding}
            onFix={applyFix}
            readOnly={readOnly}
            pending={live.pending}
            blocked={valid ? null : `${state.sourceIssues[0]?.where}: ${state.sourceIssues[0]?.message}. Findings show the last valid table.`}
          />
          {live.error && <p className="q-alert q-alert-fault text-sm">Analysis failed: {live.error}</p>}
        </aside>
      </div>
    </div>
  );
}

function SaveDialog({ busy, base, onCancel, onSave }: { busy: boolean; base: number; onCancel: () => void; onSave: (message: string) => void }) {
  const [message, setMessage] = useState('');
  const ref = useRef<HTMLTextAreaElement>(null);
  useEffect(() => ref.current?.focus(), []);
  return (
    <form
      className="q-card p-4 flex flex-col gap-2 max-w-xl"
      role="dialog"
      aria-label="Save a new revision"
      onSubmit={(e) => {
        e.preventDefault();
        onSave(message.trim());
      }}
      onKeyDown={(e) => {
        if (e.key === 'Escape') onCancel();
      }}
      data-testid="save-dialog"
    >
      <label>
        <span className="q-label">What changed (revision message)</span>
        <textarea ref={ref} className="q-textarea" rows={2} maxLength={2000} value={message} onChange={(e) => setMessage(e.target.value)} placeholder="e.g. hold the motor off while the guard is open" />
      </label>
      <p className="q-hint">Saves a new immutable revision on top of {base ? `r${base}` : 'nothing yet'}. If someone saved in the meantime, nothing is overwritten.</p>
      <div className="flex gap-2">
        <button type="submit" className="q-btn q-btn-primary" disabled={busy} data-testid="save-submit">
          {busy ? 'Saving…' : 'Save'}
        </button>
        <button type="button" className="q-btn" onClick={onCancel}>
          Cancel
        </button>
      </div>
    </form>
  );
}

/** The stale-base screen: someone saved first. Compare, reapply the user's edits, or keep theirs whole. */
function ConflictScreen(props: {
  workspace: string;
  controller: string;
  base: number;
  head: number;
  baseSource: string;
  mine: FlowTable;
  mySource: string;
  onReapply: (merged: FlowTable, headSource: string, r: ReapplyResult) => void;
  onKeepMine: (headSource: string) => void;
  onBack: () => void;
}) {
  const { workspace, controller, base, head, baseSource, mine, mySource } = props;
  const headRev = useRevision(workspace, controller, head);
  const [compare, setCompare] = useState(false);
  const headSource = headRev.data?.revision.source ?? null;
  const merge = useMemo(() => {
    if (!headSource) return null;
    try {
      const baseT = baseSource ? parseText(baseSource) : createTable({ name: mine.name, inputs: mine.inputs, outputs: mine.outputs, states: [] as string[] });
      return reapplyEdits(baseT, mine, parseText(headSource));
    } catch (e) {
      return { table: null, applied: 0, conflicts: [], notes: [], blocked: e instanceof Error ? e.message : String(e) } satisfies ReapplyResult;
    }
  }, [headSource, baseSource, mine]);
  return (
    <section className="flex flex-col gap-3 max-w-5xl" data-testid="conflict-screen" aria-labelledby="conflict-title">
      <h1 id="conflict-title" className="text-xl font-semibold">
        Someone saved r{head} while you were editing r{base}
      </h1>
      <p className="q-alert q-alert-caution text-sm">
        <strong>Nothing was overwritten and nothing is lost.</strong> <span>Your edits are kept here and in your local draft. Choose how to continue.</span>
      </p>
      {headRev.data && (
        <p className="text-sm">
          r{head} by <strong>{headRev.data.revision.author ?? 'someone'}</strong>, {new Date(headRev.data.revision.createdAt).toLocaleString()}: “{headRev.data.revision.message || 'no message'}”
        </p>
      )}
      {headRev.isError && <p className="q-alert q-alert-fault text-sm">Could not load r{head}: {(headRev.error as Error).message}</p>}
      <div className="flex flex-wrap gap-2">
        <button type="button" className="q-btn" onClick={() => setCompare(!compare)} aria-expanded={compare} data-testid="conflict-compare">
          {compare ? 'Hide comparison' : `Compare mine with r${head}`}
        </button>
        <button type="button" className="q-btn q-btn-primary" disabled={!merge?.table || !headSource} onClick={() => merge?.table && headSource && props.onReapply(merge.table, headSource, merge)} data-testid="conflict-reapply">
          Reapply my edits onto r{head}
        </button>
        <button type="button" className="q-btn" disabled={!headSource} onClick={() => headSource && props.onKeepMine(headSource)}>
          Keep my whole table on top of r{head}
        </button>
        <a className="q-btn q-btn-quiet" href={`/w/${encodeURIComponent(workspace)}/c/${encodeURIComponent(controller)}/compare?from=${base}&to=${head}`} target="_blank" rel="noopener">
          What changed in r{head} (opens the compare)
        </a>
        <button type="button" className="q-btn q-btn-quiet" onClick={props.onBack}>
          Back to my edits
        </button>
      </div>
      {merge?.blocked && <p className="text-sm text-caution">Cell-by-cell reapply is not possible: {merge.blocked}</p>}
      {merge && !merge.blocked && (
        <p className="text-sm text-ink-muted">
          Reapplying carries {merge.applied} change{merge.applied === 1 ? '' : 's'} over{merge.conflicts.length ? `; ${merge.conflicts.length} cell${merge.conflicts.length === 1 ? ' was' : 's were'} changed on both sides (yours would win):` : '.'}
        </p>
      )}
      {merge && merge.notes.length > 0 && (
        <ul className="text-sm text-caution list-disc pl-5" data-testid="conflict-notes">
          {merge.notes.map((n) => (
            <li key={n}>{n}</li>
          ))}
        </ul>
      )}
      {merge && merge.conflicts.length > 0 && (
        <table className="q-table font-mono text-sm">
          <thead>
            <tr>
              <th>cell</th>
              <th>r{base}</th>
              <th>yours</th>
              <th>r{head}</th>
            </tr>
          </thead>
          <tbody>
            {merge.conflicts.map((c, i) => (
              <tr key={i}>
                <td>
                  {c.state} @ {c.inputs}
                </td>
                <td>{c.base}</td>
                <td>{c.mine}</td>
                <td>{c.theirs}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      {compare && headSource && (
        <div className="grid gap-3 md:grid-cols-2" data-testid="conflict-diff">
          <div>
            <h2 className="text-sm font-semibold mb-1">Your draft</h2>
            <SourceLines text={mySource} other={headSource} />
          </div>
          <div>
            <h2 className="text-sm font-semibold mb-1">r{head}</h2>
            <SourceLines text={headSource} other={mySource} />
          </div>
        </div>
      )}
    </section>
  );
}

/** A source listing with the lines that the other side lacks marked by a bar and a "≠" sign. */
function SourceLines({ text, other }: { text: string; other: string }) {
  const others = new Set(other.split('\n'));
  return (
    <pre className="font-mono text-xs bg-surface border border-line rounded-md p-2 overflow-auto max-h-[50vh]">
      {text.split('\n').map((l, i) => {
        const differs = !others.has(l);
        return (
          <div key={i} className={differs ? 'bg-caution-soft border-l-4 border-caution pl-1' : 'pl-2'}>
            <span className="select-none text-ink-muted mr-1">{differs ? '≠' : ' '}</span>
            {l || ' '}
          </div>
        );
      })}
    </pre>
  );
}
