/**
 * Build: preview the generated files of either target in read-only Monaco (C / Rust
 * highlighting), the footprint estimate, the findings that change what the code does, and the
 * zip download with the safety caution beside the button.
 */
import { useEffect, useState } from 'react';
import Editor from '@monaco-editor/react';
import { pickMonacoTheme, setupMonaco } from '../../lib/client/monaco-setup';
import { useDownloadBundle, useGeneratePreview } from '../../lib/client/queries';
import type { Finding } from '../../lib/engine/findings';
import type { FlowTable } from '../../lib/engine/model';
import { downloadText } from './Waveform';

setupMonaco();

/** The caution shown next to every download of generated code. */
export const SAFETY_CAUTION =
  'Generated code is not certified. Safety functions must follow the applicable functional-safety standards (e.g. IEC 61508, ISO 13849) and local codes, be reviewed by qualified people, and be tested on the target hardware.';

/** Finding codes whose cells become run-time faults or policy decisions in generated code. */
const CODE_AFFECTING = new Set(['unspecified-transition', 'oscillation', 'unspecified-power-up', 'order-dependent-double-change', 'output-glitch']);

/** What each affecting finding means for the firmware. */
const EFFECT_TEXT: Record<string, string> = {
  'unspecified-transition': 'the handler holds state and outputs and calls the fault hook',
  oscillation: 'the handler holds and reports an oscillation fault',
  'unspecified-power-up': 'init starts in the reset state with all outputs 0 and reports a power-up fault',
  'order-dependent-double-change': 'the outcome of this double change depends on the order the pins are read',
  'output-glitch': 'the written outputs are final values, but the table promises a flicker the design did not mean',
};

/** What the generated handler does with an order-dependent double change, per policy. */
const POLICY_EFFECT: Record<string, string> = {
  guarded: 'the guarded policy makes the handler hold and fault instead of guessing',
  fault: 'the fault policy makes the handler hold and fault',
  stepwise: 'the stepwise policy applies the lower input first, which is one of the possible outcomes',
  direct: 'the direct policy settles in the new column, which is one of the possible outcomes',
};

/** Props of the build panel. */
export interface GeneratePanelProps {
  workspace: string;
  controller: string;
  table: FlowTable;
  source: string;
  findings: Finding[];
  /** The revision label for headers: `r3`, or `draft` when there are unsaved edits. */
  revisionLabel: string;
  /** Whether the source parses (no preview otherwise). */
  valid: boolean;
}

function languageOf(path: string): string {
  if (/\.(c|h)$/.test(path)) return 'c';
  if (/\.rs$/.test(path)) return 'rust';
  return 'plaintext';
}

/** The build panel. */
export default function GeneratePanel({ workspace, controller, table, source, findings, revisionLabel, valid }: GeneratePanelProps) {
  const [target, setTarget] = useState<'c' | 'rust'>('c');
  const [file, setFile] = useState<string | null>(null);
  const [error, setError] = useState<string | null>(null);
  const fetchZip = useDownloadBundle(workspace, controller);
  const busy = fetchZip.isPending;
  const preview = useGeneratePreview(workspace, controller, source, target, revisionLabel, valid);
  const files = preview.data?.files ?? [];
  useEffect(() => {
    if (files.length && (!file || !files.some((f) => f.path === file))) setFile(files.find((f) => /\.(c|rs)$/.test(f.path) && !/test/.test(f.path))?.path ?? files[0]!.path);
  }, [files, file]);
  const current = files.find((f) => f.path === file) ?? null;
  const est = preview.data?.footprint;
  const affecting = findings.filter((f) => CODE_AFFECTING.has(f.code));

  const download = () => {
    setError(null);
    fetchZip.mutate(
      { source, target, revision: revisionLabel },
      {
        onSuccess: ({ blob, filename }) => downloadText(filename ?? `${controller}-${target}.zip`, blob),
        onError: (e) => setError(e instanceof Error ? e.message : String(e)),
      },
    );
  };

  if (!valid) return <p className="q-alert q-alert-fault text-sm">Fix the source errors first: code is generated from a table that parses.</p>;

  return (
    <div className="flex flex-col gap-4" data-testid="generate-panel">
      <div className="flex flex-wrap items-center gap-3">
        <div role="radiogroup" aria-label="Target" className="flex gap-1">
          {(['c', 'rust'] as const).map((t) => (
            <button key={t} type="button" role="radio" aria-checked={target === t} className={`q-btn q-btn-small ${target === t ? 'q-btn-primary' : ''}`} onClick={() => setTarget(t)} data-testid={`target-${t}`}>
              {t === 'c' ? 'C99' : 'Rust (no_std)'}
            </button>
          ))}
        </div>
        <span className="text-sm text-ink-muted">
          Headers say <code>{revisionLabel}</code>
          {revisionLabel === 'draft' ? ' (unsaved edits; save to get a revision number)' : ''}.
        </span>
      </div>

      <section className="grid gap-3 md:grid-cols-3" aria-label="Footprint">
        <div className="q-card p-3">
          <div className="text-xs text-ink-muted">Table bytes (flash)</div>
          <div className="text-lg font-semibold font-mono" data-testid="table-bytes">
            {est ? est.tableBytes.toLocaleString('en') : '…'}
          </div>
          <div className="text-xs text-ink-muted">
            {table.states.length} states × {1 << table.inputs.length} columns × ({est ? `${est.stateBytes} + ${est.outputEntryBytes}` : '…'}) bytes
          </div>
        </div>
        <div className="q-card p-3">
          <div className="text-xs text-ink-muted">Handler code (estimate)</div>
          <div className="text-lg font-semibold font-mono" data-testid="code-bytes">{est ? `≈ ${est.codeBytes} B` : '…'}</div>
          <div className="text-xs text-ink-muted">{est?.codeBasis ?? 'Cortex-M0+ at -Os'}; constant time, no loops over the table</div>
        </div>
        <div className="q-card p-3">
          <div className="text-xs text-ink-muted">Bundle</div>
          <div className="text-lg font-semibold font-mono">{preview.data ? `${(preview.data.zipBytes / 1024).toFixed(1)} KiB` : '…'}</div>
          <div className="text-xs text-ink-muted font-mono truncate" title={preview.data?.sha256}>
            {preview.data ? `sha256 ${preview.data.sha256.slice(0, 16)}…` : 'generating'}
          </div>
        </div>
      </section>

      {affecting.length > 0 && (
        <section className="q-alert q-alert-caution text-sm" aria-label="Findings that affect the generated code">
          <strong>
            {affecting.length} finding{affecting.length === 1 ? '' : 's'} change what the firmware does:
          </strong>
          <ul className="list-disc pl-5 mt-1">
            {affecting.slice(0, 12).map((f, i) => (
              <li key={i}>
                <code>{f.code}</code> {f.state ? <span className="font-mono">({f.state}{f.inputs !== undefined ? `, ${f.inputs}` : ''})</span> : null}: {EFFECT_TEXT[f.code]}
                {f.code === 'order-dependent-double-change' ? `; ${POLICY_EFFECT[table.settings.doubleChange]}` : ''}
              </li>
            ))}
            {affecting.length > 12 && <li>and {affecting.length - 12} more</li>}
          </ul>
        </section>
      )}

      {preview.isError && <p className="q-alert q-alert-fault text-sm">{(preview.error as Error).message}</p>}
      {preview.isPending && <p className="text-sm text-ink-muted">Generating…</p>}
      {files.length > 0 && (
        <div className="grid gap-3 md:grid-cols-[14rem_1fr]">
          <ul className="flex flex-col gap-0.5 text-sm font-mono" aria-label="Generated files" data-testid="generated-files">
            {files.map((f) => (
              <li key={f.path}>
                <button type="button" className={`w-full text-left px-2 py-1 rounded ${f.path === file ? 'bg-signal-soft' : 'hover:bg-raised'}`} aria-current={f.path === file ? 'true' : undefined} onClick={() => setFile(f.path)}>
                  {f.path} <span className="text-xs text-ink-muted">{f.size} B</span>
                </button>
              </li>
            ))}
          </ul>
          <div className="border border-line rounded-md overflow-hidden min-h-[24rem]" data-testid="generated-preview">
            {current && (
              <Editor
                height="55vh"
                path={`generated://${target}/${current.path}`}
                language={languageOf(current.path)}
                value={current.text}
                theme={pickMonacoTheme()}
                options={{ readOnly: true, domReadOnly: true, minimap: { enabled: false }, fontFamily: 'Fira Code, ui-monospace, monospace', fontLigatures: false, fontSize: 13, scrollBeyondLastLine: false, automaticLayout: true, ariaLabel: `${current.path} (read only)` }}
                loading={<p className="p-4 text-sm text-ink-muted">Loading the viewer…</p>}
              />
            )}
          </div>
        </div>
      )}

      <section className="flex flex-wrap items-start gap-4 border-t border-line pt-3">
        <button type="button" className="q-btn q-btn-primary" onClick={download} disabled={busy || !preview.data} data-testid="download-zip">
          {busy ? 'Preparing…' : `Download ${target === 'c' ? 'C' : 'Rust'} zip`}
        </button>
        <p className="q-alert q-alert-caution text-sm max-w-3xl" role="note" data-testid="safety-caution">
          <strong>Safety:</strong> <span>{SAFETY_CAUTION}</span>
        </p>
      </section>
      {error && <p className="q-alert q-alert-fault text-sm">{error}</p>}
    </div>
  );
}
