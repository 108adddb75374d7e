/**
 * The controllers of a workspace: a sortable, filterable table (revision, findings, last release,
 * who changed it and when), and for editors: create (blank, starter or upload), rename,
 * archive/restore. Everyone can export any controller in any format.
 */
import { useMemo, useRef, useState } from 'react';
import { QueryRoot } from '../../lib/client/query-client';
import { useControllers, useCreateController, useUpdateController, type ControllerListItem } from '../../lib/client/queries';
import { ApiClientError, controllerPath } from '../../lib/client/api';
import { FORMATS, formatFromFilename, parseSource, type SourceFormat } from '../../lib/engine/formats';
import { FlowTableError, type EngineIssue } from '../../lib/engine/model';

/** Largest file the upload accepts (the server enforces the same). */
export const MAX_UPLOAD_BYTES = 2 * 1024 * 1024;

/** Props given by the page. */
export interface ControllerListProps {
  workspace: string;
  canEdit: boolean;
}

/** The island entry. */
export default function ControllerList(props: ControllerListProps) {
  return (
    <QueryRoot>
      <ControllerListInner {...props} />
    </QueryRoot>
  );
}

type SortKey = 'name' | 'head' | 'errors' | 'warnings' | 'release' | 'changed';

const FORMAT_LABEL: Record<SourceFormat, string> = { text: 'Quiesce text (.qfl)', json: 'JSON', kiss2: 'KISS2', csv: 'CSV' };

function ControllerListInner({ workspace, canEdit }: ControllerListProps) {
  const [archived, setArchived] = useState(false);
  const [filter, setFilter] = useState('');
  const [sort, setSort] = useState<{ key: SortKey; dir: 1 | -1 }>({ key: 'changed', dir: -1 });
  const [creating, setCreating] = useState(false);
  const q = useControllers(workspace, archived);
  const rows = useMemo(() => {
    const f = filter.trim().toLowerCase();
    const list = (q.data?.controllers ?? []).filter((c) => !f || c.name.toLowerCase().includes(f) || c.slug.includes(f) || c.description.toLowerCase().includes(f) || (c.changedBy ?? '').toLowerCase().includes(f));
    const val = (c: ControllerListItem): string | number => {
      switch (sort.key) {
        case 'name':
          return c.name.toLowerCase();
        case 'head':
          return c.head;
        case 'errors':
          return c.findings?.error ?? -1;
        case 'warnings':
          return c.findings?.warning ?? -1;
        case 'release':
          return c.lastRelease?.publishedAt ?? '';
        case 'changed':
          return c.changedAt;
      }
    };
    return [...list].sort((a, b) => {
      const x = val(a);
      const y = val(b);
      return (x < y ? -1 : x > y ? 1 : 0) * sort.dir;
    });
  }, [q.data, filter, sort]);

  const header = (key: SortKey, label: string) => (
    <th scope="col" aria-sort={sort.key === key ? (sort.dir === 1 ? 'ascending' : 'descending') : 'none'}>
      <button type="button" className="font-semibold hover:text-ink whitespace-nowrap" onClick={() => setSort({ key, dir: sort.key === key ? ((-sort.dir) as 1 | -1) : key === 'name' ? 1 : -1 })}>
        {label} <span aria-hidden="true">{sort.key === key ? (sort.dir === 1 ? '▲' : '▼') : '↕'}</span>
      </button>
    </th>
  );

  return (
    <div className="flex flex-col gap-4" data-testid="controller-list">
      <div className="flex flex-wrap items-end gap-3">
        <label className="flex flex-col">
          <span className="q-label">Filter</span>
          <input className="q-input w-64" type="search" value={filter} onChange={(e) => setFilter(e.target.value)} placeholder="name, description or person" />
        </label>
        <label className="flex items-center gap-2 text-sm">
          <input type="checkbox" checked={archived} onChange={(e) => setArchived(e.target.checked)} /> Show archived
        </label>
        <span className="flex-1" />
        {canEdit && (
          <button type="button" className="q-btn q-btn-primary" onClick={() => setCreating(!creating)} aria-expanded={creating} data-testid="new-controller">
            New controller
          </button>
        )}
      </div>
      {creating && canEdit && <CreatePanel workspace={workspace} onClose={() => setCreating(false)} />}
      {q.isError && <p className="q-alert q-alert-fault text-sm">{(q.error as Error).message}</p>}
      {q.isPending ? (
        <p className="text-sm text-ink-muted">Loading…</p>
      ) : rows.length === 0 ? (
        <p className="q-card p-5 text-ink-muted">{filter ? 'No controller matches the filter.' : canEdit ? 'No controllers yet. Create one from the starter or upload a table.' : 'No controllers yet.'}</p>
      ) : (
        <div className="q-card overflow-x-auto">
          <table className="q-table">
            <thead>
              <tr>
                {header('name', 'Name')}
                {header('head', 'Revision')}
                {header('errors', 'Errors')}
                {header('warnings', 'Warnings')}
                {header('release', 'Last release')}
                {header('changed', 'Last change')}
                <th scope="col">Actions</th>
              </tr>
            </thead>
            <tbody>
              {rows.map((c) => (
                <Row key={c.id} c={c} workspace={workspace} canEdit={canEdit} />
              ))}
            </tbody>
          </table>
        </div>
      )}
    </div>
  );
}

function Row({ c, workspace, canEdit }: { c: ControllerListItem; workspace: string; canEdit: boolean }) {
  const [renaming, setRenaming] = useState(false);
  const [name, setName] = useState(c.name);
  const update = useUpdateController(workspace);
  const href = `/w/${workspace}/c/${c.slug}`;
  return (
    <tr data-controller={c.slug}>
      <td>
        {renaming ? (
          <form
            className="flex gap-1"
            onSubmit={(e) => {
              e.preventDefault();
              update.mutate({ slug: c.slug, name }, { onSuccess: () => setRenaming(false) });
            }}
          >
            <input className="q-input py-1 w-56" value={name} onChange={(e) => setName(e.target.value)} aria-label={`New name for ${c.name}`} maxLength={80} autoFocus />
            <button type="submit" className="q-btn q-btn-small q-btn-primary" disabled={update.isPending}>
              Rename
            </button>
            <button type="button" className="q-btn q-btn-small q-btn-quiet" onClick={() => setRenaming(false)}>
              Cancel
            </button>
          </form>
        ) : (
          <>
            <a href={href} className="font-medium">
              {c.name}
            </a>
            {c.archived && <span className="q-badge ml-2">archived</span>}
            {c.description && <p className="text-sm text-ink-muted max-w-md truncate">{c.description}</p>}
          </>
        )}
        {update.isError && <p className="text-sm text-fault">{(update.error as Error).message}</p>}
      </td>
      <td className="font-mono">{c.head > 0 ? `r${c.head}` : '—'}</td>
      <td>
        {c.findings ? (
          <span className={`q-badge ${c.findings.error > 0 ? 'q-badge-fault' : 'q-badge-settle'}`}>
            {c.findings.error > 0 ? '!' : '✓'} {c.findings.error}
          </span>
        ) : (
          '—'
        )}
      </td>
      <td>{c.findings ? <span className={`q-badge ${c.findings.warning > 0 ? 'q-badge-caution' : ''}`}>{c.findings.warning > 0 ? '▲' : ''} {c.findings.warning}</span> : '—'}</td>
      <td className="text-sm">{c.lastRelease ? <span className="font-mono">{c.lastRelease.label}</span> : <span className="text-ink-muted">none</span>}</td>
      <td className="text-sm text-ink-muted whitespace-nowrap">
        {c.changedBy ?? '—'} · <time dateTime={c.changedAt}>{new Date(c.changedAt).toLocaleString()}</time>
      </td>
      <td className="whitespace-nowrap">
        <div className="flex gap-1 items-center">
          <details className="relative">
            <summary className="q-btn q-btn-small list-none cursor-pointer">Export ▾</summary>
            <ul className="absolute right-0 z-20 mt-1 q-card p-1 min-w-[12rem] text-sm">
              {FORMATS.map((f) => (
                <li key={f}>
                  <a className="block px-2 py-1 rounded hover:bg-raised no-underline text-ink" href={`${controllerPath(workspace, c.slug)}/export?format=${f}`} download>
                    {FORMAT_LABEL[f]}
                  </a>
                </li>
              ))}
            </ul>
          </details>
          {canEdit && !renaming && (
            <button type="button" className="q-btn q-btn-small q-btn-quiet" onClick={() => setRenaming(true)}>
              Rename
            </button>
          )}
          {canEdit && (
            <button type="button" className="q-btn q-btn-small q-btn-quiet" disabled={update.isPending} onClick={() => update.mutate({ slug: c.slug, archived: !c.archived })}>
              {c.archived ? 'Restore' : 'Archive'}
            </button>
          )}
        </div>
      </td>
    </tr>
  );
}

/** Checks a file in the browser before upload: size, format and a full parse with located issues. */
export function checkUploadText(text: string, filename: string): { format: SourceFormat | null; issues: EngineIssue[] } {
  const format = formatFromFilename(filename) ?? null;
  if (!format) return { format, issues: [{ where: filename, message: 'unknown file type', hint: 'use .qfl, .json, .kiss2 (.kiss) or .csv' }] };
  try {
    parseSource(text, format, { name: 'upload' });
    return { format, issues: [] };
  } catch (e) {
    if (e instanceof FlowTableError) return { format, issues: e.issues };
    return { format, issues: [{ where: filename, message: e instanceof Error ? e.message : String(e) }] };
  }
}

function CreatePanel({ workspace, onClose }: { workspace: string; onClose: () => void }) {
  const [name, setName] = useState('');
  const [kind, setKind] = useState<'starter' | 'blank' | 'upload'>('starter');
  const [file, setFile] = useState<{ name: string; text: string; format: SourceFormat | null } | null>(null);
  const [issues, setIssues] = useState<EngineIssue[]>([]);
  const [problem, setProblem] = useState<string | null>(null);
  const create = useCreateController(workspace);
  const fileRef = useRef<HTMLInputElement>(null);

  const onFile = async (f: File | undefined) => {
    setIssues([]);
    setProblem(null);
    setFile(null);
    if (!f) return;
    if (f.size > MAX_UPLOAD_BYTES) {
      setProblem(`${f.name} is ${(f.size / 1024 / 1024).toFixed(1)} MiB; the limit is 2 MiB.`);
      return;
    }
    const text = await f.text();
    const r = checkUploadText(text, f.name);
    setFile({ name: f.name, text, format: r.format });
    setIssues(r.issues);
    if (!name) setName(f.name.replace(/\.[^.]+$/, '').replace(/[_]+/g, ' '));
  };

  const submit = (e: React.SubmitEvent<HTMLFormElement>) => {
    e.preventDefault();
    setProblem(null);
    if (kind === 'upload' && (!file || issues.length)) {
      setProblem(file ? 'Fix the problems in the file first.' : 'Choose a file.');
      return;
    }
    create.mutate(
      { name: name.trim(), kind, ...(kind === 'upload' && file ? { upload: { filename: file.name, text: file.text, ...(file.format ? { format: file.format } : {}) } } : {}) },
      {
        onSuccess: (r) => {
          window.location.href = r.url;
        },
        onError: (err) => {
          if (err instanceof ApiClientError && Array.isArray(err.detail.issues)) setIssues(err.detail.issues as EngineIssue[]);
          setProblem(err.message);
        },
      },
    );
  };

  return (
    <form className="q-card p-4 flex flex-col gap-3 max-w-2xl" onSubmit={submit} aria-label="New controller" data-testid="create-panel">
      <label>
        <span className="q-label">Name</span>
        <input className="q-input" value={name} onChange={(e) => setName(e.target.value)} required maxLength={80} placeholder="e.g. Loading door interlock" />
      </label>
      <fieldset className="flex flex-col gap-1.5">
        <legend className="q-label">Start from</legend>
        <label className="flex gap-2 text-sm">
          <input type="radio" name="kind" checked={kind === 'starter'} onChange={() => setKind('starter')} />
          <span>
            <strong>Guard interlock starter</strong> — two inputs (guard closed, start), one output (motor); a complete, checked example to edit.
          </span>
        </label>
        <label className="flex gap-2 text-sm">
          <input type="radio" name="kind" checked={kind === 'blank'} onChange={() => setKind('blank')} />
          <span>
            <strong>Blank table</strong> — one input, one output, one state.
          </span>
        </label>
        <label className="flex gap-2 text-sm">
          <input type="radio" name="kind" checked={kind === 'upload'} onChange={() => setKind('upload')} data-testid="kind-upload" />
          <span>
            <strong>Upload a file</strong> — Quiesce text (.qfl), JSON, KISS2 (.kiss2, .kiss) or CSV, up to 2 MiB.
          </span>
        </label>
      </fieldset>
      {kind === 'upload' && (
        <label>
          <span className="q-label">File</span>
          <input ref={fileRef} type="file" accept=".qfl,.json,.kiss2,.kiss,.csv,text/plain,application/json,text/csv" onChange={(e) => void onFile(e.target.files?.[0])} data-testid="upload-file" />
          {file && issues.length === 0 && (
            <span className="q-hint text-settle">
              ✓ {file.name} reads as {file.format ? FORMAT_LABEL[file.format] : 'unknown'}.
            </span>
          )}
        </label>
      )}
      {issues.length > 0 && (
        <div className="q-alert q-alert-fault text-sm" role="alert" data-testid="upload-issues">
          <strong>{file?.name ?? 'The file'} has {issues.length} problem{issues.length === 1 ? '' : 's'}:</strong>
          <ul className="mt-1 font-mono text-xs flex flex-col gap-0.5">
            {issues.slice(0, 20).map((i, k) => (
              <li key={k}>
                {i.where}: {i.message}
                {i.hint ? ` (${i.hint})` : ''}
              </li>
            ))}
          </ul>
        </div>
      )}
      {problem && issues.length === 0 && (
        <p className="q-alert q-alert-fault text-sm" role="alert">
          {problem}
        </p>
      )}
      <div className="flex gap-2">
        <button type="submit" className="q-btn q-btn-primary" disabled={create.isPending || !name.trim()} data-testid="create-submit">
          {create.isPending ? 'Creating…' : 'Create'}
        </button>
        <button type="button" className="q-btn" onClick={onClose}>
          Cancel
        </button>
      </div>
    </form>
  );
}
