/**
 * Output fill: previews the don't-care assignments the engine proposes so that single-input
 * changes cannot glitch, lists the changes no fill can save, and applies them as one edit.
 */
import { useMemo } from 'react';
import { fillOutputs } from '../../lib/engine/fill';
import type { FlowTable } from '../../lib/engine/model';

/** Props of the fill panel. */
export interface FillPanelProps {
  table: FlowTable;
  readOnly: boolean;
  onApply: (filled: FlowTable, label: string) => void;
  onShowCell: (state: string, inputs: string) => void;
}

/** The fill panel. */
export default function FillPanel({ table, readOnly, onApply, onShowCell }: FillPanelProps) {
  const r = useMemo(() => fillOutputs(table), [table]);
  return (
    <div className="flex flex-col gap-3" data-testid="fill-panel">
      <p className="text-sm text-ink-muted">
        Between two stable cells with the same output value, a transient cell on the way must carry that value; between different values the output may change only once. These are the don't-cares that need a value.
      </p>
      {r.assignments.length === 0 ? (
        <p className="q-alert q-alert-ok text-sm">Nothing to fill: no don't-care output can cause a glitch.</p>
      ) : (
        <table className="q-table font-mono text-sm max-w-2xl" data-testid="fill-assignments">
          <thead>
            <tr>
              <th scope="col">state</th>
              <th scope="col">inputs</th>
              <th scope="col">output</th>
              <th scope="col">becomes</th>
              <th scope="col">
                <span className="sr-only">show in the table</span>
              </th>
            </tr>
          </thead>
          <tbody>
            {r.assignments.map((a, i) => (
              <tr key={i}>
                <td>{a.state}</td>
                <td>{a.inputs}</td>
                <td>{a.output}</td>
                <td>
                  – → <strong>{a.value}</strong>
                </td>
                <td>
                  <button type="button" className="q-btn q-btn-quiet q-btn-small" onClick={() => onShowCell(a.state, a.inputs)}>
                    Show
                  </button>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      {r.conflicts.length > 0 && (
        <section className="q-alert q-alert-fault text-sm">
          <strong>No fill can save {r.conflicts.length === 1 ? 'this change' : 'these changes'}:</strong>
          <ul className="mt-1 list-disc pl-5">
            {r.conflicts.map((c, i) => (
              <li key={i}>
                <span className="font-mono">
                  {c.state} {c.from}→{c.inputs} {c.output}
                </span>
                : {c.reason}
              </li>
            ))}
          </ul>
        </section>
      )}
      {!readOnly && r.assignments.length > 0 && (
        <div>
          <button type="button" className="q-btn q-btn-primary" onClick={() => onApply(r.table, `fill ${r.assignments.length} don't-care outputs`)} data-testid="apply-fill">
            Apply {r.assignments.length} assignment{r.assignments.length === 1 ? '' : 's'}
          </button>
        </div>
      )}
    </div>
  );
}
