/**
 * Timing diagram of a simulator run, as SVG: one lane per input and output (high/low traces)
 * and a state lane (a bus with the state name in each slot). Each event is one slot; faults
 * are marked with a cross and the word "fault" so that colour is not the only signal.
 */
import { forwardRef } from 'react';

/** One slot of the diagram. */
export interface WaveSlot {
  /** Input bits, character k = inputs[k]. */
  inputs: string;
  /** Output bits after the event. */
  outputs: string;
  state: string;
  /** Transient states visited before `state`, shown as small ticks. */
  transient: string[];
  fault: string | null;
}

/** Props: lane names and the slots so far. */
export interface WaveformProps {
  inputs: string[];
  outputs: string[];
  slots: WaveSlot[];
}

const LANE_H = 32;
const LABEL_W = 130;
const SLOT_W = 84;
const PAD = 6;

/** The SVG waveform; its ref is used for SVG export. */
const Waveform = forwardRef<SVGSVGElement, WaveformProps>(function Waveform({ inputs, outputs, slots }, ref) {
  const lanes = [...inputs.map((n) => ({ kind: 'in' as const, name: n })), ...outputs.map((n) => ({ kind: 'out' as const, name: n })), { kind: 'state' as const, name: 'state' }];
  const width = LABEL_W + Math.max(1, slots.length) * SLOT_W + PAD * 2;
  const height = lanes.length * LANE_H + 22;
  const x0 = LABEL_W;
  return (
    <svg
      ref={ref}
      xmlns="http://www.w3.org/2000/svg"
      width={width}
      height={height}
      viewBox={`0 0 ${width} ${height}`}
      role="img"
      aria-label={`Waveform of ${slots.length} steps`}
      data-testid="waveform"
      data-steps={slots.length}
      className="font-mono text-[12px]"
      style={{ fontFamily: 'Fira Code, monospace' }}
    >
      <rect x={0} y={0} width={width} height={height} fill="var(--q-surface, #fff)" />
      {slots.map((_, i) => (
        <g key={`tick-${i}`}>
          <line x1={x0 + i * SLOT_W} x2={x0 + i * SLOT_W} y1={0} y2={height - 18} stroke="var(--q-line, #ccc)" strokeDasharray="2 3" />
          <text x={x0 + i * SLOT_W + SLOT_W / 2} y={height - 6} textAnchor="middle" fill="var(--q-ink-muted, #555)">
            {i === 0 ? 'pwr' : `t${i}`}
          </text>
        </g>
      ))}
      {lanes.map((lane, li) => {
        const y = li * LANE_H + 4;
        const hi = y + 4;
        const lo = y + LANE_H - 6;
        const colour = lane.kind === 'in' ? 'var(--q-note, #34479a)' : lane.kind === 'out' ? 'var(--q-signal, #0b6b66)' : 'var(--q-ink, #1b2230)';
        const label = (
          <text x={4} y={y + LANE_H / 2 + 2} fill="var(--q-ink, #1b2230)">
            <tspan fill="var(--q-ink-muted, #555)">{lane.kind === 'in' ? 'in ' : lane.kind === 'out' ? 'out ' : ''}</tspan>
            {lane.name.length > 11 ? `${lane.name.slice(0, 10)}…` : lane.name}
          </text>
        );
        if (lane.kind === 'state') {
          return (
            <g key={`lane-${li}`} data-lane="state">
              {label}
              {slots.map((s, i) => {
                const x = x0 + i * SLOT_W;
                const tw = s.transient.length ? Math.min(18, 6 * s.transient.length) : 0;
                return (
                  <g key={i}>
                    {tw > 0 && (
                      <g>
                        <rect x={x + 1} y={hi} width={tw} height={lo - hi} fill="var(--q-raised, #eee)" stroke={colour} strokeWidth={0.8} strokeDasharray="2 2" />
                        <title>{`transient: ${s.transient.join(' → ')}`}</title>
                      </g>
                    )}
                    <path d={`M${x + 1 + tw} ${(hi + lo) / 2} L${x + 4 + tw} ${hi} H${x + SLOT_W - 4} L${x + SLOT_W - 1} ${(hi + lo) / 2} L${x + SLOT_W - 4} ${lo} H${x + 4 + tw} Z`} fill="none" stroke={s.fault ? 'var(--q-fault, #a8221a)' : colour} strokeWidth={1.4} />
                    <text x={x + tw + (SLOT_W - tw) / 2} y={(hi + lo) / 2 + 4} textAnchor="middle" fill={s.fault ? 'var(--q-fault, #a8221a)' : 'var(--q-ink, #1b2230)'} data-state={s.state}>
                      {s.fault ? `✕${truncate(s.state, 5)}` : truncate(s.state, tw ? 5 : 7)}
                    </text>
                    {s.fault && <title>{`fault (${s.fault}); held in ${s.state}`}</title>}
                  </g>
                );
              })}
            </g>
          );
        }
        const bitIndex = lane.kind === 'in' ? inputs.indexOf(lane.name) : outputs.indexOf(lane.name);
        let d = '';
        slots.forEach((s, i) => {
          const bits = lane.kind === 'in' ? s.inputs : s.outputs;
          const v = bits[bitIndex] === '1';
          const yv = v ? hi : lo;
          const x = x0 + i * SLOT_W;
          d += i === 0 ? `M${x} ${yv}` : ` V${yv}`;
          d += ` H${x + SLOT_W}`;
        });
        return (
          <g key={`lane-${li}`} data-lane={`${lane.kind}:${lane.name}`}>
            {label}
            <line x1={x0} x2={width - PAD} y1={lo} y2={lo} stroke="var(--q-line, #ddd)" />
            {d && <path d={d} fill="none" stroke={colour} strokeWidth={1.8} />}
            {slots.map((s, i) => {
              const bits = lane.kind === 'in' ? s.inputs : s.outputs;
              return (
                <text key={i} x={x0 + i * SLOT_W + SLOT_W - 8} y={y + LANE_H / 2 + 3} textAnchor="end" fill="var(--q-ink-muted, #555)" fontSize={10} data-value={bits[bitIndex]}>
                  {bits[bitIndex]}
                </text>
              );
            })}
          </g>
        );
      })}
    </svg>
  );
});

function truncate(s: string, n: number): string {
  return s.length > n ? `${s.slice(0, n - 1)}…` : s;
}

export default Waveform;

/** Serializes an SVG element with its computed theme colours inlined, for download. */
export function svgToDownload(svg: SVGSVGElement): string {
  const clone = svg.cloneNode(true) as SVGSVGElement;
  const style = getComputedStyle(document.documentElement);
  const text = new XMLSerializer().serializeToString(clone);
  return text.replace(/var\((--q-[a-z-]+)(?:,\s*([^)]+))?\)/g, (_, name: string, fallback: string | undefined) => style.getPropertyValue(name).trim() || fallback || '#000');
}

/** Starts a browser download of text content. */
export function downloadText(filename: string, content: string | Blob, type = 'text/plain'): void {
  const blob = content instanceof Blob ? content : new Blob([content], { type });
  const url = URL.createObjectURL(blob);
  const a = document.createElement('a');
  a.href = url;
  a.download = filename;
  document.body.appendChild(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}
