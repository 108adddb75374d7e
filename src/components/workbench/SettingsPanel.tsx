/**
 * Controller settings carried with the table: name, description, generated-code prefix
 * (C prefix and Rust crate name), double-change policy, and the reset state.
 */
import { useEffect, useState } from 'react';
import { DOUBLE_CHANGE_POLICIES, settingsSchema, type DoubleChangePolicy, type FlowTable } from '../../lib/engine/model';
import { checkName, type TableEdit } from '../../lib/client/table-edits';

/** What each policy does, in our words. */
export const POLICY_TEXT: Record<DoubleChangePolicy, string> = {
  guarded: 'Apply a two-input change only when both orders and the direct change all end in the same stable state; otherwise fault. Three or more inputs fault.',
  fault: 'Any change of more than one input holds state and outputs and reports a fault.',
  stepwise: 'Apply the changed inputs one at a time, lowest input first, settling after each; any failure faults.',
  direct: 'Settle directly in the new column, as if the inputs had always been there.',
};

/** Props of the settings panel. */
export interface SettingsPanelProps {
  table: FlowTable;
  readOnly: boolean;
  onEdit: (e: TableEdit) => void;
}

/** The settings form; each field applies on change (name and prefix on blur or Enter). */
export default function SettingsPanel({ table: t, readOnly, onEdit }: SettingsPanelProps) {
  const [name, setName] = useState(t.name);
  const [prefix, setPrefix] = useState(t.settings.prefix ?? '');
  const [about, setAbout] = useState(t.description ?? '');
  useEffect(() => setName(t.name), [t.name]);
  useEffect(() => setPrefix(t.settings.prefix ?? ''), [t.settings.prefix]);
  useEffect(() => setAbout(t.description ?? ''), [t.description]);
  if (readOnly)
    return (
      <dl className="grid grid-cols-[12rem_1fr] gap-x-4 gap-y-2 text-sm max-w-3xl" data-testid="settings-panel">
        <dt className="font-medium">Table name</dt>
        <dd className="font-mono">{t.name}</dd>
        <dt className="font-medium">Code prefix / crate name</dt>
        <dd className="font-mono">{t.settings.prefix ?? '(derived from the table name)'}</dd>
        <dt className="font-medium">Double-change policy</dt>
        <dd>
          <strong className="font-mono">{t.settings.doubleChange}</strong> — {POLICY_TEXT[t.settings.doubleChange]}
        </dd>
        <dt className="font-medium">Reset state</dt>
        <dd className="font-mono">{t.states[t.reset]}</dd>
        <dt className="font-medium">Description</dt>
        <dd>{t.description ?? '—'}</dd>
      </dl>
    );
  const nameProblem = name === t.name ? null : checkName(name, [], 'table');
  const prefixCheck = prefix === '' ? null : settingsSchema.shape.prefix.safeParse(prefix);
  const prefixProblem = prefixCheck && !prefixCheck.success ? (prefixCheck.error.issues[0]?.message ?? 'invalid prefix') : null;
  return (
    <form className="flex flex-col gap-4 max-w-2xl" onSubmit={(e) => e.preventDefault()} data-testid="settings-panel">
      <label>
        <span className="q-label">Table name</span>
        <input
          className="q-input font-mono"
          value={name}
          disabled={readOnly}
          onChange={(e) => setName(e.target.value)}
          onBlur={() => !nameProblem && name !== t.name && onEdit({ kind: 'set-name', name })}
          onKeyDown={(e) => e.key === 'Enter' && !nameProblem && name !== t.name && onEdit({ kind: 'set-name', name })}
          aria-invalid={nameProblem ? true : undefined}
        />
        {nameProblem && <span className="q-hint text-fault">{nameProblem}</span>}
      </label>
      <label>
        <span className="q-label">Code prefix / crate name</span>
        <input
          className="q-input font-mono"
          value={prefix}
          disabled={readOnly}
          placeholder="derived from the table name when empty"
          onChange={(e) => setPrefix(e.target.value)}
          onBlur={() => !prefixProblem && prefix !== (t.settings.prefix ?? '') && onEdit({ kind: 'set-settings', settings: { prefix: prefix || undefined } })}
          onKeyDown={(e) => e.key === 'Enter' && !prefixProblem && onEdit({ kind: 'set-settings', settings: { prefix: prefix || undefined } })}
          aria-invalid={prefixProblem ? true : undefined}
          aria-describedby="prefix-hint"
        />
        <span id="prefix-hint" className="q-hint">
          {prefixProblem ?? 'Used for C file and function names (e.g. door_ctl_step) and as the Rust crate name.'}
        </span>
      </label>
      <fieldset disabled={readOnly}>
        <legend className="q-label">Double-change policy (what firmware does when two pins change between two reads)</legend>
        <div className="flex flex-col gap-2 mt-1">
          {DOUBLE_CHANGE_POLICIES.map((p) => (
            <label key={p} className="flex gap-2 items-start text-sm">
              <input type="radio" name="policy" value={p} checked={t.settings.doubleChange === p} onChange={() => onEdit({ kind: 'set-settings', settings: { doubleChange: p } })} className="mt-1" />
              <span>
                <strong className="font-mono">{p}</strong>
                {p === 'guarded' ? ' (default)' : ''} — {POLICY_TEXT[p]}
              </span>
            </label>
          ))}
        </div>
      </fieldset>
      <label>
        <span className="q-label">Reset state</span>
        <select className="q-select font-mono w-64" value={t.reset} disabled={readOnly} onChange={(e) => onEdit({ kind: 'set-reset', index: Number(e.target.value) })}>
          {t.states.map((s, i) => (
            <option key={i} value={i}>
              {s}
            </option>
          ))}
        </select>
        <span className="q-hint">Power-up settles from this state in the column of the first input snapshot.</span>
      </label>
      <label>
        <span className="q-label">Description</span>
        <textarea
          className="q-textarea"
          rows={4}
          maxLength={4000}
          value={about}
          disabled={readOnly}
          onChange={(e) => setAbout(e.target.value)}
          onBlur={() => about !== (t.description ?? '') && onEdit({ kind: 'set-description', description: about })}
        />
      </label>
    </form>
  );
}
