/**
 * The state map: states as boxes laid out by elkjs (layered, run in the browser), transitions
 * as arrows labelled with their input columns, stable columns as a loop above each box.
 * Unreachable states are dimmed and dashed; the selected finding's path is drawn thick.
 */
import { useEffect, useMemo, useRef, useState } from 'react';
import ELK from 'elkjs/lib/elk.bundled.js';
import type { ElkNode, ElkExtendedEdge } from 'elkjs/lib/elk-api';
import { countColumns, grayKeys, keyToColumn, NONE, type FlowTable } from '../../lib/engine/model';
import { downloadText, svgToDownload } from './Waveform';

/** A step of a highlighted path, by names. */
export interface MapPathStep {
  state: string;
  inputs: string;
}

/** Props of the map. */
export interface StateDiagramProps {
  table: FlowTable;
  /** Names of reachable states; states outside it are dimmed. Undefined: all shown as reachable. */
  reachable?: Set<string>;
  path?: MapPathStep[] | null;
  onSelectState?: (state: number) => void;
}

interface Layout {
  width: number;
  height: number;
  nodes: { id: number; x: number; y: number; w: number; h: number }[];
  edges: { from: number; to: number; label: string; points: { x: number; y: number }[]; labelAt: { x: number; y: number } }[];
}

const elk = new ELK();
/** Above this many transitions the labels would be unreadable; the map then shows counts. */
const MAX_LABEL_KEYS = 4;

function edgeLabel(keys: string[]): string {
  return keys.length > MAX_LABEL_KEYS ? `${keys.slice(0, MAX_LABEL_KEYS).join(',')} +${keys.length - MAX_LABEL_KEYS}` : keys.join(',');
}

/** The SVG state map. */
export default function StateDiagram({ table: t, reachable, path, onSelectState }: StateDiagramProps) {
  const svgRef = useRef<SVGSVGElement>(null);
  const [layout, setLayout] = useState<Layout | null>(null);
  const [error, setError] = useState<string | null>(null);

  // Transitions grouped by (from, to), and stable keys per state; recomputed from cells.
  const graph = useMemo(() => {
    const cols = countColumns(t.inputs.length);
    const keys = grayKeys(t.inputs.length);
    const edges = new Map<string, { from: number; to: number; keys: string[] }>();
    const stable: string[][] = t.states.map(() => []);
    for (let s = 0; s < t.states.length; s++)
      for (const k of keys) {
        const n = t.next[s * cols + keyToColumn(k)]!;
        if (n === NONE) continue;
        if (n === s) stable[s]!.push(k);
        else {
          const id = `${s}>${n}`;
          let e = edges.get(id);
          if (!e) edges.set(id, (e = { from: s, to: n, keys: [] }));
          e.keys.push(k);
        }
      }
    return { edges: [...edges.values()], stable };
  }, [t]);

  const shapeKey = useMemo(() => JSON.stringify([t.states, graph.edges.map((e) => [e.from, e.to, edgeLabel(e.keys)]), graph.stable.map((s) => edgeLabel(s))]), [t.states, graph]);

  useEffect(() => {
    let cancelled = false;
    const charW = 7.4;
    const children: ElkNode[] = t.states.map((name, i) => {
      const loop = edgeLabel(graph.stable[i]!);
      const w = Math.max(70, Math.min(220, Math.max(name.length, loop.length) * charW + 28));
      return { id: `n${i}`, width: w, height: 50 };
    });
    const edges: ElkExtendedEdge[] = graph.edges.map((e, i) => {
      const label = edgeLabel(e.keys);
      return { id: `e${i}`, sources: [`n${e.from}`], targets: [`n${e.to}`], labels: [{ id: `l${i}`, text: label, width: label.length * 6.6 + 6, height: 14 }] };
    });
    const graphIn: ElkNode = {
        id: 'root',
        layoutOptions: {
          'elk.algorithm': 'layered',
          'elk.direction': 'RIGHT',
          'elk.edgeRouting': 'POLYLINE',
          'elk.layered.spacing.nodeNodeBetweenLayers': '70',
          'elk.spacing.nodeNode': '40',
          'elk.spacing.edgeLabel': '4',
          'elk.edgeLabels.inline': 'false',
          'elk.padding': '[top=30,left=16,bottom=16,right=16]',
        },
        children,
        edges,
      };
    elk
      .layout(graphIn)
      .then((res: ElkNode) => {
        if (cancelled) return;
        const out: Layout = { width: (res.width ?? 400) + 10, height: (res.height ?? 200) + 10, nodes: [], edges: [] };
        for (const n of res.children ?? []) out.nodes.push({ id: Number(n.id.slice(1)), x: n.x ?? 0, y: n.y ?? 0, w: n.width ?? 60, h: n.height ?? 40 });
        (res.edges ?? []).forEach((e, i) => {
          const g = graph.edges[i]!;
          const sec = e.sections?.[0];
          const points = sec ? [sec.startPoint, ...(sec.bendPoints ?? []), sec.endPoint] : [];
          const l = e.labels?.[0];
          out.edges.push({ from: g.from, to: g.to, label: edgeLabel(g.keys), points, labelAt: { x: (l?.x ?? 0) + (l?.width ?? 0) / 2, y: (l?.y ?? 0) + 11 } });
        });
        setLayout(out);
        setError(null);
      })
      .catch((e: unknown) => !cancelled && setError(e instanceof Error ? e.message : String(e)));
    return () => {
      cancelled = true;
    };
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [shapeKey]);

  const onPath = useMemo(() => {
    const nodes = new Set<string>();
    const steps = new Set<string>();
    if (path)
      for (let i = 0; i < path.length; i++) {
        nodes.add(path[i]!.state);
        if (i > 0 && path[i - 1]!.state !== path[i]!.state) steps.add(`${path[i - 1]!.state}>${path[i]!.state}`);
      }
    return { nodes, steps };
  }, [path]);

  if (error) return <p className="q-alert q-alert-fault text-sm">The map could not be laid out: {error}</p>;
  if (!layout) return <p className="text-sm text-ink-muted">Laying out the map…</p>;

  const pathD = (pts: { x: number; y: number }[]) => {
    if (pts.length < 2) return '';
    let d = `M${pts[0]!.x} ${pts[0]!.y}`;
    for (const p of pts.slice(1)) d += ` L${p.x} ${p.y}`;
    return d;
  };

  return (
    <div className="flex flex-col gap-2" data-testid="state-map">
      <div className="flex items-center gap-2 text-xs text-ink-muted flex-wrap">
        <span>Boxes are states; arrows carry the input columns that leave a state; the loop above a box lists its stable columns.</span>
        <span>Dashed, faded box: unreachable.</span>
        <button
          type="button"
          className="q-btn q-btn-small ml-auto"
          onClick={() => svgRef.current && downloadText(`${t.name}-map.svg`, svgToDownload(svgRef.current), 'image/svg+xml')}
        >
          Export SVG
        </button>
      </div>
      <div className="overflow-auto border border-line rounded-md bg-surface max-h-[70vh]">
        <svg ref={svgRef} xmlns="http://www.w3.org/2000/svg" width={layout.width} height={layout.height} viewBox={`0 0 ${layout.width} ${layout.height}`} role="img" aria-label={`State map of ${t.name}`} style={{ fontFamily: 'Fira Code, monospace', fontSize: 11 }}>
          <defs>
            <marker id="q-arrow" viewBox="0 0 10 10" refX="9" refY="5" markerWidth="7" markerHeight="7" orient="auto-start-reverse">
              <path d="M0 0 L10 5 L0 10 z" fill="var(--q-line-strong, #888)" />
            </marker>
            <marker id="q-arrow-hot" viewBox="0 0 10 10" refX="9" refY="5" markerWidth="7" markerHeight="7" orient="auto-start-reverse">
              <path d="M0 0 L10 5 L0 10 z" fill="var(--q-focus, #c2410c)" />
            </marker>
          </defs>
          <rect width={layout.width} height={layout.height} fill="var(--q-surface, #fff)" />
          {layout.edges.map((e, i) => {
            const hot = onPath.steps.has(`${t.states[e.from]}>${t.states[e.to]}`);
            const dim = reachable && !reachable.has(t.states[e.from]!);
            return (
              <g key={i} opacity={dim ? 0.4 : 1} data-edge={`${t.states[e.from]}>${t.states[e.to]}`}>
                <path d={pathD(e.points)} fill="none" stroke={hot ? 'var(--q-focus, #c2410c)' : 'var(--q-line-strong, #888)'} strokeWidth={hot ? 3 : 1.3} markerEnd={hot ? 'url(#q-arrow-hot)' : 'url(#q-arrow)'} />
                <text x={e.labelAt.x} y={e.labelAt.y} textAnchor="middle" fill={hot ? 'var(--q-focus, #c2410c)' : 'var(--q-ink-muted, #555)'} fontWeight={hot ? 700 : 400} paintOrder="stroke" stroke="var(--q-surface, #fff)" strokeWidth={3}>
                  {e.label}
                </text>
              </g>
            );
          })}
          {layout.nodes.map((n) => {
            const name = t.states[n.id]!;
            const isReach = !reachable || reachable.has(name);
            const hot = onPath.nodes.has(name);
            const loop = edgeLabel(graph.stable[n.id]!);
            const cx = n.x + n.w / 2;
            return (
              <g
                key={n.id}
                opacity={isReach ? 1 : 0.45}
                data-state-node={name}
                data-reachable={isReach}
                onClick={() => onSelectState?.(n.id)}
                style={{ cursor: onSelectState ? 'pointer' : 'default' }}
              >
                {loop && (
                  <g>
                    <path d={`M${cx - 14} ${n.y} C${cx - 26} ${n.y - 26} ${cx + 26} ${n.y - 26} ${cx + 14} ${n.y}`} fill="none" stroke="var(--q-settle, #2d6a1f)" strokeWidth={1.6} markerEnd="url(#q-arrow)" />
                  </g>
                )}
                <rect
                  x={n.x}
                  y={n.y}
                  width={n.w}
                  height={n.h}
                  rx={8}
                  fill={hot ? 'var(--q-signal-soft, #dcefed)' : 'var(--q-raised, #eee)'}
                  stroke={hot ? 'var(--q-focus, #c2410c)' : isReach ? 'var(--q-ink, #1b2230)' : 'var(--q-line-strong, #888)'}
                  strokeWidth={hot ? 3 : n.id === t.reset ? 2.4 : 1.2}
                  strokeDasharray={isReach ? undefined : '5 4'}
                />
                {n.id === t.reset && <rect x={n.x + 3} y={n.y + 3} width={n.w - 6} height={n.h - 6} rx={6} fill="none" stroke="var(--q-ink, #1b2230)" strokeWidth={0.8} />}
                <text x={cx} y={n.y + 20} textAnchor="middle" fill="var(--q-ink, #1b2230)" fontWeight={600} fontSize={12}>
                  {name.length > 26 ? `${name.slice(0, 25)}…` : name}
                </text>
                <text x={cx} y={n.y + 37} textAnchor="middle" fill="var(--q-settle, #2d6a1f)" fontSize={10}>
                  {loop ? `● ${loop}` : isReach ? 'no stable column' : 'unreachable'}
                </text>
                <title>{`${name}${n.id === t.reset ? ' (reset)' : ''}${isReach ? '' : ' — unreachable'}; stable in ${graph.stable[n.id]!.join(', ') || 'no column'}`}</title>
              </g>
            );
          })}
        </svg>
      </div>
    </div>
  );
}
