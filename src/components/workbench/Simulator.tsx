/**
 * The run panel: choose the power-up inputs, then toggle one input at a time (buttons or
 * keys 1–9), or two at once deliberately to see the double-change policy at work. Each step
 * animates its settle path; the waveform grows; a run can be saved as a named scenario.
 */
import { useEffect, useMemo, useRef, useState } from 'react';
import { DOUBLE_CHANGE_POLICIES, type DoubleChangePolicy, type FlowTable } from '../../lib/engine/model';
import { currentColumn, outputsToBits, replayScenario, runToVectors, startRun, stepRun, type SimRun } from '../../lib/client/sim-session';
import type { TableEdit } from '../../lib/client/table-edits';
import Waveform, { downloadText, svgToDownload, type WaveSlot } from './Waveform';

/** Props of the simulator. */
export interface SimulatorProps {
  table: FlowTable;
  readOnly: boolean;
  onEdit: (e: TableEdit) => void;
  /** Shows the settle path of the latest step in the grid (cells by state and column). */
  onPath: (cells: { state: number; column: number }[] | null, failed: boolean) => void;
}

const FAULT_TEXT: Record<string, string> = {
  unspecified: 'reached an unspecified cell: state and outputs held',
  oscillation: 'the column loops: state and outputs held',
  'double-change': 'the double-change policy refused this change: state and outputs held',
  'power-up': 'power-up failed: reset state held, outputs 0',
};

/** The simulator panel. */
export default function Simulator({ table: t, readOnly, onEdit, onPath }: SimulatorProps) {
  const n = t.inputs.length;
  const [powerBits, setPowerBits] = useState<number>(0);
  const [policy, setPolicy] = useState<DoubleChangePolicy>(t.settings.doubleChange);
  const [run, setRun] = useState<SimRun | null>(null);
  const [pair, setPair] = useState<number[]>([]);
  const [anim, setAnim] = useState<number>(-1);
  const [scenarioName, setScenarioName] = useState('');
  const [message, setMessage] = useState<string | null>(null);
  const waveRef = useRef<SVGSVGElement>(null);
  const rootRef = useRef<HTMLDivElement>(null);

  // A run belongs to one behaviour of the table; an edit of cells or names ends it (saving a scenario does not).
  const behaviour = useMemo(() => behaviourKey(t), [t]);
  useEffect(() => {
    setRun(null);
    setAnim(-1);
    onPath(null, false);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [behaviour]);

  const last = run?.events[run.events.length - 1] ?? null;

  // Animate the latest settle path one cell at a time (skipped when motion is reduced).
  useEffect(() => {
    if (!last) return;
    const reduce = typeof window !== 'undefined' && window.matchMedia?.('(prefers-reduced-motion: reduce)').matches;
    const cells = last.path.map((s) => ({ state: s, column: last.column }));
    if (reduce || cells.length <= 1) {
      setAnim(cells.length - 1);
      onPath(cells, last.fault !== 'none');
      return;
    }
    let i = 0;
    setAnim(0);
    onPath(cells.slice(0, 1), false);
    const timer = setInterval(() => {
      i++;
      setAnim(i);
      onPath(cells.slice(0, i + 1), i === cells.length - 1 && last.fault !== 'none');
      if (i >= cells.length - 1) clearInterval(timer);
    }, 260);
    return () => clearInterval(timer);
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [last]);

  const power = () => {
    setRun(startRun(t, powerBits, policy));
    setMessage(null);
    setPair([]);
  };
  const toggle = (mask: number) => {
    if (!run) return;
    setRun(stepRun(run, currentColumn(run) ^ mask));
  };

  const onKey = (e: React.KeyboardEvent) => {
    const target = e.target as HTMLElement;
    if (target.tagName === 'INPUT' || target.tagName === 'SELECT' || target.tagName === 'TEXTAREA') return;
    const d = Number(e.key);
    if (Number.isInteger(d) && d >= 1 && d <= Math.min(9, n)) {
      e.preventDefault();
      if (!run) power();
      else toggle(1 << (d - 1));
    } else if (e.key === 'p' || e.key === 'P') {
      e.preventDefault();
      power();
    }
  };

  const slots: WaveSlot[] = useMemo(
    () =>
      (run?.events ?? []).map((ev) => ({
        inputs: ev.key,
        outputs: outputsToBits(ev.after.outputs, t.outputs.length),
        state: t.states[ev.after.state]!,
        transient: ev.path.slice(ev.changed === 0 ? 0 : 1, -1).map((s) => t.states[s]!),
        fault: ev.fault === 'none' ? null : ev.fault,
      })),
    [run, t],
  );

  const col = run ? currentColumn(run) : powerBits;

  return (
    <div ref={rootRef} className="flex flex-col gap-4 outline-none" tabIndex={-1} onKeyDown={onKey} data-testid="simulator">
      <section className="flex flex-wrap items-end gap-4">
        <fieldset className="flex flex-wrap items-center gap-2">
          <legend className="q-label">Power-up inputs</legend>
          {t.inputs.map((name, k) => (
            <label key={k} className="flex items-center gap-1 font-mono text-sm q-badge">
              <input type="checkbox" checked={((powerBits >> k) & 1) === 1} onChange={() => setPowerBits(powerBits ^ (1 << k))} aria-label={`power-up value of ${name}`} />
              {name}
            </label>
          ))}
          {n === 0 && <span className="text-sm text-ink-muted">no inputs</span>}
        </fieldset>
        <label className="flex flex-col">
          <span className="q-label">Double change</span>
          <select className="q-select w-36" value={policy} onChange={(e) => setPolicy(e.target.value as DoubleChangePolicy)} aria-label="double-change policy for this run">
            {DOUBLE_CHANGE_POLICIES.map((p) => (
              <option key={p} value={p}>
                {p}
                {p === t.settings.doubleChange ? ' (table)' : ''}
              </option>
            ))}
          </select>
        </label>
        <button type="button" className="q-btn q-btn-primary" onClick={power} data-testid="power-up" aria-keyshortcuts="p">
          {run ? 'Power up again' : 'Power up'} <kbd className="text-xs opacity-80">P</kbd>
        </button>
      </section>

      {run && (
        <>
          <section aria-label="Change inputs" className="flex flex-col gap-2">
            <div className="flex flex-wrap gap-2 items-center">
              <span className="text-sm text-ink-muted">Toggle one input:</span>
              {t.inputs.map((name, k) => (
                <button
                  key={k}
                  type="button"
                  className="q-btn q-btn-small font-mono"
                  onClick={() => toggle(1 << k)}
                  aria-keyshortcuts={k < 9 ? String(k + 1) : undefined}
                  data-testid={`toggle-${k}`}
                  aria-label={`toggle ${name}, now ${(col >> k) & 1}`}
                >
                  {k < 9 && <kbd className="text-xs text-ink-muted">{k + 1}</kbd>} {name}={(col >> k) & 1}→{((col >> k) & 1) ^ 1}
                </button>
              ))}
            </div>
            {n >= 2 && (
              <div className="flex flex-wrap gap-2 items-center">
                <span className="text-sm text-ink-muted">Change two at once:</span>
                {t.inputs.map((name, k) => (
                  <label key={k} className="flex items-center gap-1 text-sm font-mono">
                    <input
                      type="checkbox"
                      checked={pair.includes(k)}
                      onChange={() => setPair(pair.includes(k) ? pair.filter((x) => x !== k) : [...pair, k].slice(-2))}
                      aria-label={`include ${name} in the double change`}
                    />
                    {name}
                  </label>
                ))}
                <button type="button" className="q-btn q-btn-small" disabled={pair.length !== 2} onClick={() => toggle(pair.reduce((m, k) => m | (1 << k), 0))} data-testid="double-change">
                  Apply double change ({policy})
                </button>
              </div>
            )}
          </section>

          <section aria-live="polite" className="text-sm" data-testid="sim-status">
            {last && (
              <p>
                <span className="font-mono">
                  {last.path.map((s, i) => (
                    <span key={i} className={i <= anim ? (i === last.path.length - 1 ? 'font-bold' : '') : 'opacity-30'}>
                      {i > 0 ? ' → ' : ''}
                      {t.states[s]}
                    </span>
                  ))}
                </span>{' '}
                at <span className="font-mono">{last.key || '·'}</span>:{' '}
                {last.fault === 'none' ? (
                  <span className="text-settle">
                    ✓ stable in <strong>{t.states[last.after.state]}</strong>, outputs <span className="font-mono">{outputsToBits(last.after.outputs, t.outputs.length) || '—'}</span>
                  </span>
                ) : (
                  <span className="text-fault">
                    ✕ fault: {FAULT_TEXT[last.fault] ?? last.fault}
                  </span>
                )}
                {last.changed > 1 && <span className="text-ink-muted"> ({last.changed} inputs changed, policy {run.policy})</span>}
              </p>
            )}
          </section>

          <section className="overflow-auto border border-line rounded-md bg-surface p-1">
            <Waveform ref={waveRef} inputs={t.inputs} outputs={t.outputs} slots={slots} />
          </section>

          <section className="flex flex-wrap gap-2 items-end">
            <button type="button" className="q-btn q-btn-small" onClick={() => waveRef.current && downloadText(`${t.name}-run.svg`, svgToDownload(waveRef.current), 'image/svg+xml')}>
              Export waveform SVG
            </button>
            {!readOnly && (
              <form
                className="flex items-end gap-2"
                onSubmit={(e) => {
                  e.preventDefault();
                  const name = scenarioName.trim();
                  if (!name) return;
                  onEdit({ kind: 'add-scenario', scenario: { name, inputs: runToVectors(run) } });
                  setMessage(`Saved scenario "${name}" with ${run.events.length} vectors; it becomes a generated unit test.`);
                  setScenarioName('');
                }}
              >
                <label className="flex flex-col">
                  <span className="q-label">Scenario name</span>
                  <input className="q-input w-48" value={scenarioName} onChange={(e) => setScenarioName(e.target.value)} maxLength={64} placeholder="e.g. open then close" />
                </label>
                <button type="submit" className="q-btn q-btn-small" disabled={!scenarioName.trim()}>
                  Save as scenario
                </button>
              </form>
            )}
          </section>
        </>
      )}
      {message && <p className="q-alert q-alert-ok text-sm">{message}</p>}

      {t.scenarios.length > 0 && (
        <section>
          <h3 className="text-sm font-semibold mb-1">Scenarios kept with the table</h3>
          <ul className="flex flex-col gap-1">
            {t.scenarios.map((s, i) => (
              <li key={s.name} className="flex items-center gap-2 text-sm">
                <span className="font-medium">{s.name}</span>
                <span className="font-mono text-xs text-ink-muted truncate max-w-[28rem]">{s.inputs.join(' ')}</span>
                <button type="button" className="q-btn q-btn-quiet q-btn-small" onClick={() => setRun(replayScenario(t, s.inputs, policy))}>
                  Replay
                </button>
                {!readOnly && (
                  <button type="button" className="q-btn q-btn-quiet q-btn-small text-fault" onClick={() => onEdit({ kind: 'delete-scenario', index: i })}>
                    Delete
                  </button>
                )}
              </li>
            ))}
          </ul>
        </section>
      )}
      <p className="text-xs text-ink-muted">Keys: P powers up · 1–9 toggle inputs x0–x8 · the path animates in the table view.</p>
    </div>
  );
}

/** A fingerprint of what the table does (cells, names, policy), ignoring scenarios and description. */
function behaviourKey(t: FlowTable): string {
  let h = 2166136261;
  const mix = (x: number) => {
    h ^= x & 0xffff;
    h = Math.imul(h, 16777619);
    h ^= x >>> 16;
    h = Math.imul(h, 16777619);
  };
  for (let i = 0; i < t.next.length; i++) {
    mix(t.next[i]!);
    mix(t.outCare[i]!);
    mix(t.outValue[i]!);
  }
  return `${h >>> 0}|${t.reset}|${t.settings.doubleChange}|${JSON.stringify([t.states, t.inputs, t.outputs])}`;
}
