/** The owners' audit log: a filterable table that loads older entries on demand. */
import { useMemo, useState } from 'react';
import { QueryRoot } from '../../lib/client/query-client';
import { useAuditLog, type AuditItemView, type AuditPageView } from '../../lib/client/workspace-queries';

type Props = { workspace: string; initial: AuditPageView };

function describeDetail(detail: Record<string, unknown>): string {
  return Object.entries(detail)
    .filter(([, v]) => v !== null && v !== undefined && v !== '')
    .map(([k, v]) => `${k}: ${typeof v === 'string' ? v : JSON.stringify(v)}`)
    .join(' · ');
}

function AuditTable({ workspace, initial }: Props) {
  const query = useAuditLog(workspace, initial);
  const [filter, setFilter] = useState('');
  const items: AuditItemView[] = useMemo(() => query.data?.pages.flatMap((p) => p.items) ?? [], [query.data]);
  const needle = filter.trim().toLowerCase();
  const shown = needle
    ? items.filter((i) =>
        [i.action, i.target, i.targetName ?? '', i.actorName ?? '', i.actorEmail ?? '', describeDetail(i.detail)].some((s) => s.toLowerCase().includes(needle)),
      )
    : items;
  return (
    <div>
      <div className="mb-3 flex items-end gap-3">
        <div className="flex-1 max-w-sm">
          <label htmlFor="audit-filter" className="q-label">Filter</label>
          <input
            id="audit-filter"
            className="q-input"
            type="search"
            value={filter}
            onChange={(e) => setFilter(e.target.value)}
            placeholder="action, person, target…"
          />
        </div>
        <p className="text-sm text-ink-muted pb-2" aria-live="polite">
          {shown.length} of {items.length} loaded entries
        </p>
      </div>
      <div className="q-card overflow-x-auto">
        <table className="q-table" data-testid="audit-table">
          <thead>
            <tr>
              <th scope="col">When (UTC)</th>
              <th scope="col">Who</th>
              <th scope="col">Action</th>
              <th scope="col">Target</th>
              <th scope="col">Detail</th>
            </tr>
          </thead>
          <tbody>
            {shown.map((i) => (
              <tr key={i.id}>
                <td className="font-mono text-xs whitespace-nowrap">{i.at.slice(0, 19).replace('T', ' ')}</td>
                <td className="text-sm">
                  {i.actorName ?? (i.actorKeyId ? <span>CI key <code>{i.actorKeyId.slice(0, 6)}</code></span> : <span className="text-ink-muted">—</span>)}
                </td>
                <td><code className="text-xs">{i.action}</code></td>
                <td className="text-sm">{i.targetName ? <span title={i.target}>{i.targetName}</span> : <code className="text-xs">{i.target}</code>}</td>
                <td className="text-sm text-ink-muted">{describeDetail(i.detail)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <div className="mt-3 flex items-center gap-3">
        {query.hasNextPage && (
          <button type="button" className="q-btn" onClick={() => void query.fetchNextPage()} disabled={query.isFetchingNextPage}>
            {query.isFetchingNextPage ? 'Loading…' : 'Load older entries'}
          </button>
        )}
        {query.isError && <p role="alert" className="text-fault text-sm">Could not load: {query.error.message}</p>}
      </div>
    </div>
  );
}

/** The audit log island (mount with client:load). */
export default function AuditLog(props: Props) {
  return (
    <QueryRoot>
      <AuditTable {...props} />
    </QueryRoot>
  );
}
