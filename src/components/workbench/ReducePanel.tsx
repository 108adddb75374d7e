/**
 * Row reduction: the triangular implication chart (incompatible pairs crossed, implied pairs
 * listed per cell), the maximal compatibles, the chosen closed cover (exact or heuristic),
 * a preview of the reduced table, and "apply as new draft".
 */
import { useMemo, useState } from 'react';
import { minimizeTable, verifyReduction, type MinimizeResult } from '../../lib/engine/minimize';
import type { FlowTable } from '../../lib/engine/model';
import { tableToText } from '../../lib/engine/formats/text';

/** Largest table whose chart is drawn cell by cell; larger ones show the lists only. */
const CHART_MAX_STATES = 40;

/** Props of the reduce panel. */
export interface ReducePanelProps {
  table: FlowTable;
  readOnly: boolean;
  onApply: (reduced: FlowTable, label: string) => void;
}

/** The reduce panel; minimization runs when the user asks (it can take up to its time budget). */
export default function ReducePanel({ table, readOnly, onApply }: ReducePanelProps) {
  const [result, setResult] = useState<{ of: FlowTable; r: MinimizeResult } | null>(null);
  const [error, setError] = useState<string | null>(null);
  const stale = result !== null && result.of !== table;
  const run = () => {
    try {
      setResult({ of: table, r: minimizeTable(table, { timeBudgetMs: 2000 }) });
      setError(null);
    } catch (e) {
      setError(e instanceof Error ? e.message : String(e));
    }
  };
  const r = result?.r;
  const problems = useMemo(() => (r && result ? verifyReduction(result.of, r.table, r.classes) : []), [r, result]);
  const names = result?.of.states ?? table.states;
  const setText = (set: readonly number[]) => `{${set.map((i) => names[i]).join(', ')}}`;

  return (
    <div className="flex flex-col gap-4" data-testid="reduce-panel">
      <div className="flex items-center gap-3 flex-wrap">
        <button type="button" className="q-btn q-btn-primary" onClick={run} data-testid="run-reduce">
          {result ? 'Reduce again' : 'Find the smallest table'}
        </button>
        <span className="text-sm text-ink-muted">Merges compatible rows: unspecified next states and don't-care outputs are free to match.</span>
      </div>
      {error && <p className="q-alert q-alert-fault text-sm">{error}</p>}
      {stale && <p className="q-alert q-alert-caution text-sm">The table changed since this reduction; run it again before applying.</p>}
      {r && result && (
        <>
          <section aria-label="Result" className="flex flex-wrap gap-3 items-center">
            <span className="q-badge q-badge-signal" data-testid="reduce-summary">
              {result.of.states.length} → {r.classes.length} rows
            </span>
            <span className={`q-badge ${r.exact ? 'q-badge-settle' : 'q-badge-caution'}`}>{r.exact ? 'exact minimum' : `heuristic (${r.stats.method})`}</span>
            <span className="text-sm text-ink-muted">
              {r.stats.compatiblePairs} compatible pairs · {r.maximal.length} maximal compatibles{r.maximalComplete ? '' : ' (list cut)'} · {r.primes.length} prime · {r.stats.ms.toFixed(0)} ms
            </span>
          </section>
          {result.of.states.length <= CHART_MAX_STATES ? (
            <ImplicationChartView result={r} states={result.of.states} />
          ) : (
            <p className="text-sm text-ink-muted">The chart has {(result.of.states.length * (result.of.states.length - 1)) / 2} cells; it is drawn for tables of up to {CHART_MAX_STATES} states.</p>
          )}
          <div className="grid gap-4 md:grid-cols-2">
            <section>
              <h3 className="text-sm font-semibold mb-1">Maximal compatibles</h3>
              <ul className="font-mono text-sm flex flex-wrap gap-1.5" data-testid="maximal-compatibles">
                {r.maximal.slice(0, 200).map((m, i) => (
                  <li key={i} className="q-badge">
                    {setText(m)}
                  </li>
                ))}
              </ul>
            </section>
            <section>
              <h3 className="text-sm font-semibold mb-1">Chosen closed cover</h3>
              <ol className="font-mono text-sm flex flex-col gap-0.5" data-testid="cover-classes">
                {r.classes.map((c, i) => (
                  <li key={i}>
                    <span className="text-ink-muted">{r.table.states[i]}</span> = {setText(c)}
                  </li>
                ))}
              </ol>
              {problems.length > 0 ? (
                <p className="q-alert q-alert-fault text-sm mt-2">Verification failed: {problems[0]!.where}: {problems[0]!.message}</p>
              ) : (
                <p className="text-xs text-settle mt-1">✓ verified: every state's specified behaviour is kept by its row.</p>
              )}
            </section>
          </div>
          <section>
            <h3 className="text-sm font-semibold mb-1">Reduced table</h3>
            <pre className="font-mono text-xs bg-raised border border-line rounded-md p-3 overflow-auto max-h-72" data-testid="reduced-preview">
              {tableToText(r.table)}
            </pre>
            {!readOnly && (
              <button
                type="button"
                className="q-btn q-btn-primary mt-2"
                disabled={stale || problems.length > 0 || r.classes.length >= result.of.states.length}
                onClick={() => onApply(r.table, `reduce to ${r.classes.length} rows`)}
                data-testid="apply-reduction"
              >
                Apply as new draft
              </button>
            )}
            {r.classes.length >= result.of.states.length && <p className="text-sm text-ink-muted mt-1">No rows can be merged: the table is already minimal.</p>}
          </section>
        </>
      )}
    </div>
  );
}

/** The triangular chart: row j, column i (i < j); crossed when incompatible, implied pairs listed. */
function ImplicationChartView({ result, states }: { result: MinimizeResult; states: string[] }) {
  const n = states.length;
  const chart = result.chart;
  const cellW = 84;
  return (
    <section aria-label="Implication chart">
      <h3 className="text-sm font-semibold mb-1">Implication chart</h3>
      <p className="text-xs text-ink-muted mb-1">✕ incompatible (with the reason on hover) · ✓ compatible · listed pairs must also merge.</p>
      <div className="overflow-auto max-h-[50vh] border border-line rounded-md bg-surface">
        <table className="font-mono text-xs border-collapse" data-testid="implication-chart">
          <tbody>
            {Array.from({ length: n - 1 }, (_, r) => r + 1).map((j) => (
              <tr key={j}>
                <th scope="row" className="px-2 text-right font-semibold sticky left-0 bg-surface">
                  {states[j]}
                </th>
                {Array.from({ length: j }, (_, i) => i).map((i) => {
                  const ok = chart.isCompatible(i, j);
                  const reason = chart.reasonOf(i, j);
                  const implied = ok ? chart.impliedPairsOf(i, j).filter((p) => !((p.pair[0] === i && p.pair[1] === j) || (p.pair[0] === j && p.pair[1] === i))) : [];
                  const why = reason ? (reason.kind === 'outputs' ? `outputs differ: ${reason.output} at ${reason.inputs}` : `implies ${states[reason.via[0]]},${states[reason.via[1]]} at ${reason.inputs}, which is incompatible`) : undefined;
                  return (
                    <td
                      key={i}
                      className={`border border-line align-top p-1 ${ok ? '' : 'q-crossed text-ink-muted'}`}
                      style={{ width: cellW, minWidth: cellW, height: 34 }}
                      title={ok ? (implied.length ? `compatible if ${implied.map((p) => `${states[p.pair[0]]},${states[p.pair[1]]}`).join('; ')} also merge` : 'compatible') : `incompatible: ${why}`}
                      data-pair={`${states[i]},${states[j]}`}
                      data-compatible={ok}
                    >
                      {ok ? (
                        implied.length ? (
                          <span className="flex flex-col">
                            {implied.slice(0, 4).map((p, k) => (
                              <span key={k}>
                                {states[p.pair[0]]},{states[p.pair[1]]}
                              </span>
                            ))}
                            {implied.length > 4 && <span>+{implied.length - 4}</span>}
                          </span>
                        ) : (
                          <span className="text-settle font-bold" aria-label="compatible">
                            ✓
                          </span>
                        )
                      ) : (
                        <span className="sr-only">incompatible</span>
                      )}
                    </td>
                  );
                })}
              </tr>
            ))}
            <tr>
              <th />
              {states.slice(0, n - 1).map((s, i) => (
                <th key={i} scope="col" className="px-1 pt-1 font-semibold text-center">
                  {s}
                </th>
              ))}
            </tr>
          </tbody>
        </table>
      </div>
    </section>
  );
}
