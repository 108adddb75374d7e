/**
 * Findings grouped by severity. Each has a one-sentence explanation of the code; selecting one
 * selects its cell and draws its path in the grid and the map; a fix button applies the
 * engine's suggested fix where there is one.
 */
import { useMemo } from 'react';
import { SEVERITIES, findingToKey, type Finding, type Fix, type Severity } from '../../lib/engine/findings';

/** What each code means, in one sentence of our own. */
export const CODE_EXPLANATIONS: Record<string, string> = {
  'unspecified-transition': 'A single-input change from a reachable stable state runs into a cell with no next state, so the controller would fault there.',
  oscillation: 'Settling in this column goes round a loop of states and never becomes stable.',
  'output-glitch': 'An output changes more than once while the controller settles after one input change, so a pin would flicker.',
  'unspecified-power-up': 'Powering up with these inputs settles from the reset state into an unspecified cell, so power-up would fault.',
  'unreachable-state': 'No power-up and no single-input change ever enters this state; it is dead weight or a missing transition.',
  'order-dependent-double-change': 'When these two inputs change together, the result depends on which one the firmware sees first.',
  'no-stable-state': 'This row has no stable cell; that is fine for a row added to steer a race, otherwise check it.',
  'output-hazard': "A don't-care output on the settle path could add a change if realized badly; filling outputs removes it.",
  'findings-truncated': 'The list of this code was cut to keep the view fast; fix the first ones and the rest will show.',
};

const SEVERITY_TEXT: Record<Severity, { title: string; badge: string; icon: string }> = {
  error: { title: 'Errors', badge: 'q-badge-fault', icon: '!' },
  warning: { title: 'Warnings', badge: 'q-badge-caution', icon: '▲' },
  info: { title: 'Notes', badge: '', icon: 'i' },
};

/** Props of the findings panel. */
export interface FindingsPanelProps {
  findings: Finding[];
  selectedKey: string | null;
  onSelect: (f: Finding) => void;
  onFix: (f: Finding, fix: Fix) => void;
  readOnly: boolean;
  /** True while a background analysis of a newer version is running. */
  pending?: boolean;
  /** Parse problems stop analysis; the panel says so. */
  blocked?: string | null;
}

/** The findings list. */
export default function FindingsPanel(props: FindingsPanelProps) {
  const { findings, selectedKey, onSelect, onFix, readOnly, pending, blocked } = props;
  const groups = useMemo(() => SEVERITIES.map((s) => ({ severity: s, items: findings.filter((f) => f.severity === s) })), [findings]);
  if (blocked)
    return (
      <div className="q-alert q-alert-fault text-sm" role="status" data-testid="findings-panel">
        <strong>Source does not parse.</strong> <span>{blocked}</span>
      </div>
    );
  return (
    <div className="flex flex-col gap-3" data-testid="findings-panel" aria-busy={pending ? true : undefined}>
      <p className="text-sm text-ink-muted" role="status" aria-live="polite">
        {findings.length === 0 ? 'No findings: every reachable single-input change settles cleanly.' : groups.map((g) => `${g.items.length} ${g.severity === 'info' ? (g.items.length === 1 ? 'note' : 'notes') : `${g.severity}${g.items.length === 1 ? '' : 's'}`}`).join(' · ')}
        {pending ? ' · updating…' : ''}
      </p>
      {groups.map(
        (g) =>
          g.items.length > 0 && (
            <section key={g.severity} aria-label={SEVERITY_TEXT[g.severity].title}>
              <h3 className="text-sm font-semibold mb-1 flex items-center gap-2">
                <span className={`q-badge ${SEVERITY_TEXT[g.severity].badge}`} aria-hidden="true">
                  {SEVERITY_TEXT[g.severity].icon}
                </span>
                {SEVERITY_TEXT[g.severity].title} <span className="text-ink-muted font-normal">({g.items.length})</span>
              </h3>
              <ul className="flex flex-col gap-1.5">
                {g.items.map((f) => {
                  const key = findingToKey(f);
                  const selected = key === selectedKey;
                  return (
                    <li key={key} className={`rounded-md border ${selected ? 'border-focus bg-raised' : 'border-line bg-surface'}`} data-finding-code={f.code}>
                      <button type="button" className="w-full text-left px-2.5 py-1.5 rounded-md" title={CODE_EXPLANATIONS[f.code]} onClick={() => onSelect(f)} aria-pressed={selected} aria-label={`${f.severity} ${f.code}: ${f.message}. Show it in the table.`}>
                        <span className="flex items-center gap-2 flex-wrap">
                          <code className="text-xs font-semibold">{f.code}</code>
                          {f.state && <span className="q-badge font-mono">{f.state}</span>}
                          {f.inputs !== undefined && <span className="q-badge font-mono" title="input column">@{f.inputs || '·'}</span>}
                          {f.output && <span className="q-badge font-mono">out {f.output}</span>}
                        </span>
                        <span className="block text-sm mt-0.5">{f.message}</span>
                        {selected && <span className="block text-xs text-ink-muted mt-0.5">{CODE_EXPLANATIONS[f.code] ?? ''}</span>}
                        {f.path.length > 0 && (
                          <span className="block font-mono text-xs text-ink-muted mt-0.5" aria-label="path">
                            {f.path.map((p) => `${p.state}@${p.inputs}${p.kind === 'stable' ? '●' : p.kind === 'unspecified' ? '?' : p.kind === 'repeat' ? '↺' : ''}`).join(' → ')}
                          </span>
                        )}
                      </button>
                      {f.fix && !readOnly && (
                        <div className="px-2.5 pb-1.5">
                          <button type="button" className="q-btn q-btn-small q-btn-primary" onClick={() => onFix(f, f.fix!)} data-testid="fix-action">
                            {f.fix.label}
                          </button>
                        </div>
                      )}
                    </li>
                  );
                })}
              </ul>
            </section>
          ),
      )}
    </div>
  );
}
