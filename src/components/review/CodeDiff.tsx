/**
 * Generated-code diff of a comparison: one tab per target, a file list that says which files
 * changed (by word and sign, not colour alone), and Monaco's side-by-side diff editor for the
 * chosen file. Monaco comes from the local package (src/lib/client/monaco-setup.ts); mount this
 * island with client:only="react".
 */
import { useMemo, useRef, useState } from 'react';
import { DiffEditor } from '@monaco-editor/react';
import { pickMonacoTheme, setupMonaco, type monaco } from '../../lib/client/monaco-setup';

setupMonaco();

/** One file of one target on both sides. */
export interface CodeDiffFile {
  path: string;
  status: 'added' | 'removed' | 'changed' | 'unchanged';
  additions: number;
  deletions: number;
  before: string | null;
  after: string | null;
}

/** One target's files. */
export interface CodeDiffTarget {
  target: 'c' | 'rust';
  fromSha: string;
  toSha: string;
  files: CodeDiffFile[];
}

/** Props of the code diff. */
export interface CodeDiffProps {
  from: number;
  to: number;
  targets: CodeDiffTarget[];
}

const TARGET_LABEL = { c: 'C', rust: 'Rust' } as const;
const STATUS_MARK = { added: 'A', removed: 'D', changed: 'M', unchanged: '·' } as const;
const STATUS_CLASS = { added: 'q-badge-settle', removed: 'q-badge-fault', changed: 'q-badge-caution', unchanged: '' } as const;

function languageOf(path: string): string {
  if (/\.(c|h)$/.test(path)) return 'c';
  if (/\.rs$/.test(path)) return 'rust';
  return 'plaintext';
}

function firstInteresting(files: CodeDiffFile[]): string {
  const changed = files.filter((f) => f.status !== 'unchanged');
  const source = changed.find((f) => /\.(c|rs)$/.test(f.path) && !/test|replay/.test(f.path)) ?? changed.find((f) => /\.(c|rs|h)$/.test(f.path));
  return (source ?? changed[0] ?? files[0])?.path ?? '';
}

/** The code diff island. */
export default function CodeDiff({ from, to, targets }: CodeDiffProps) {
  const [target, setTarget] = useState<CodeDiffTarget['target']>(targets[0]?.target ?? 'c');
  const current = targets.find((t) => t.target === target) ?? targets[0];
  const [chosen, setChosen] = useState<Record<string, string>>(() => Object.fromEntries(targets.map((t) => [t.target, firstInteresting(t.files)])));
  const [showUnchanged, setShowUnchanged] = useState(false);
  const [changes, setChanges] = useState<number | null>(null);
  const diffRef = useRef<monaco.editor.IStandaloneDiffEditor | null>(null);
  const file = current?.files.find((f) => f.path === chosen[current.target]) ?? current?.files[0];
  const listed = useMemo(() => (current ? current.files.filter((f) => showUnchanged || f.status !== 'unchanged' || f.path === file?.path) : []), [current, showUnchanged, file]);
  if (!current) return <p className="text-sm text-ink-muted">No generated code to compare.</p>;
  const changedCount = current.files.filter((f) => f.status !== 'unchanged').length;

  return (
    <div className="flex flex-col gap-3" data-testid="code-diff">
      <div role="tablist" aria-label="Target" className="q-tabs">
        {targets.map((t) => {
          const n = t.files.filter((f) => f.status !== 'unchanged').length;
          return (
            <button
              key={t.target}
              type="button"
              role="tab"
              className="q-tab"
              aria-selected={t.target === current.target}
              aria-current={t.target === current.target ? 'page' : undefined}
              onClick={() => setTarget(t.target)}
              data-testid={`code-diff-tab-${t.target}`}
            >
              {TARGET_LABEL[t.target]} <span className="text-xs text-ink-muted">({n} changed)</span>
            </button>
          );
        })}
      </div>
      <p className="text-xs text-ink-muted font-mono break-all">
        bundle r{from}: {current.fromSha} → r{to}: {current.toSha}
        {current.fromSha === current.toSha ? ' (identical)' : ''}
      </p>
      <div className="grid gap-3 lg:grid-cols-[17rem_1fr]">
        <div className="flex flex-col gap-2">
          <p className="text-sm">
            {changedCount} of {current.files.length} files differ
          </p>
          <ul className="flex flex-col gap-0.5 text-sm font-mono" aria-label={`${TARGET_LABEL[current.target]} files`} data-testid="code-diff-files">
            {listed.map((f) => (
              <li key={f.path}>
                <button
                  type="button"
                  className={`w-full text-left px-2 py-1 rounded flex items-center gap-2 ${f.path === file?.path ? 'bg-signal-soft' : 'hover:bg-raised'}`}
                  aria-current={f.path === file?.path ? 'true' : undefined}
                  onClick={() => setChosen((c) => ({ ...c, [current.target]: f.path }))}
                  data-status={f.status}
                  data-path={f.path}
                >
                  <span className={`q-badge ${STATUS_CLASS[f.status]} w-6 justify-center`} title={f.status} aria-label={f.status}>
                    {STATUS_MARK[f.status]}
                  </span>
                  <span className="truncate flex-1">{f.path}</span>
                  {f.status !== 'unchanged' && (
                    <span className="text-xs whitespace-nowrap">
                      <span className="text-settle">+{f.additions}</span> <span className="text-fault">−{f.deletions}</span>
                    </span>
                  )}
                </button>
              </li>
            ))}
          </ul>
          <label className="text-xs flex items-center gap-2">
            <input type="checkbox" checked={showUnchanged} onChange={(e) => setShowUnchanged(e.target.checked)} /> show unchanged files
          </label>
          <p className="text-xs text-ink-muted">A added · D removed · M changed · · unchanged</p>
        </div>
        <div className="border border-line rounded-md overflow-hidden min-h-[24rem]" data-testid="code-diff-editor">
          {file && (
            <>
              <div className="px-3 py-1.5 text-sm border-b border-line bg-raised flex flex-wrap items-center gap-2">
                <span className="font-mono flex-1">
                  {current.target}/{file.path} <span className="text-ink-muted">— {file.status}; left r{from}, right r{to}</span>
                </span>
                <span className="text-xs text-ink-muted" data-testid="code-diff-changes" data-changes={changes ?? undefined}>
                  {changes === null ? '' : `${changes} changed block${changes === 1 ? '' : 's'}`}
                </span>
                <button type="button" className="q-btn q-btn-small" onClick={() => diffRef.current?.goToDiff('previous')} aria-label="Previous change">
                  ↑ previous
                </button>
                <button type="button" className="q-btn q-btn-small" onClick={() => diffRef.current?.goToDiff('next')} aria-label="Next change">
                  ↓ next change
                </button>
              </div>
              <DiffEditor
                height="60vh"
                original={file.before ?? ''}
                modified={file.after ?? ''}
                originalModelPath={`compare://r${from}/${current.target}/${file.path}`}
                modifiedModelPath={`compare://r${to}/${current.target}/${file.path}`}
                language={languageOf(file.path)}
                theme={pickMonacoTheme()}
                onMount={(editor) => {
                  diffRef.current = editor;
                  editor.onDidUpdateDiff(() => setChanges(editor.getLineChanges()?.length ?? 0));
                }}
                options={{
                  readOnly: true,
                  originalEditable: false,
                  renderSideBySide: true,
                  minimap: { enabled: false },
                  fontFamily: 'Fira Code, ui-monospace, monospace',
                  fontLigatures: false,
                  fontSize: 13,
                  scrollBeyondLastLine: false,
                  automaticLayout: true,
                  renderIndicators: true,
                  ignoreTrimWhitespace: false,
                }}
                loading={<p className="p-4 text-sm text-ink-muted">Loading the diff viewer…</p>}
              />
            </>
          )}
        </div>
      </div>
    </div>
  );
}
