import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { countColumns, interchangeToTable, keyToColumn, type FlowTable } from '../../../src/lib/engine/model';
import { createRuntime, powerUp, stepMachine } from '../../../src/lib/engine/runtime';
import { settle } from '../../../src/lib/engine/settle';
import { buildTour, type Tour } from '../../../src/lib/engine/tour';
import { arbitraryAnalysisTable, loadCheckTable } from '../../support/analysis-tables';

/** Every SIC edge (stable cell, input) of the reachable stable total states, by plain BFS with settle(). */
function enumerateEdges(t: FlowTable): Set<string> {
  const n = t.inputs.length;
  const cols = countColumns(n);
  const seen = new Set<number>();
  const queue: number[] = [];
  for (let c = 0; c < cols; c++) {
    const r = settle(t, t.reset, c);
    if (r.kind === 'stable' && !seen.has(r.state * cols + c)) {
      seen.add(r.state * cols + c);
      queue.push(r.state * cols + c);
    }
  }
  const edges = new Set<string>();
  while (queue.length) {
    const x = queue.shift()!;
    const s = Math.floor(x / cols);
    const c = x % cols;
    for (let k = 0; k < n; k++) {
      edges.add(`${x}:${k}`);
      const r = settle(t, s, c ^ (1 << k));
      if (r.kind !== 'stable') continue;
      const y = r.state * cols + (c ^ (1 << k));
      if (!seen.has(y)) {
        seen.add(y);
        queue.push(y);
      }
    }
  }
  return edges;
}

/** Replays a tour through runtime.ts; returns the SIC edges taken, failing on any non-single change. */
function replay(t: FlowTable, tour: Tour): Set<string> {
  const rt = createRuntime(t);
  const cols = countColumns(t.inputs.length);
  const taken = new Set<string>();
  for (const seg of tour.segments) {
    let out = powerUp(rt, keyToColumn(seg.powerUp));
    expect(out.fault).toBe('none');
    for (const key of seg.steps) {
      const m = out.next;
      const c = keyToColumn(key);
      const diff = m.column ^ c;
      expect(diff !== 0 && (diff & (diff - 1)) === 0).toBe(true);
      taken.add(`${m.state * cols + m.column}:${Math.log2(diff)}`);
      out = stepMachine(rt, m, c);
      expect(out.changed).toBe(1);
    }
  }
  return taken;
}

describe('buildTour', () => {
  // Gated latch worked example (check-data README: Mano and Ciletti, Digital Design, encoded from
  // memory): 12 single-input changes start from stable cells.
  it('covers the 12 single-input changes of the gated latch in one segment', () => {
    const t = loadCheckTable('gated-latch');
    const tour = buildTour(t);
    expect(tour.total).toBe(12);
    expect(tour.covers).toBe(12);
    expect(tour.segments).toHaveLength(1);
    expect(replay(t, tour)).toEqual(enumerateEdges(t));
  });

  it('covers every SIC of lion, lion9 and train11, fault edges included', () => {
    // MCNC/LGSynth'91 benchmark set; the edge set is enumerated independently here.
    for (const name of ['lion', 'lion9', 'train11']) {
      const t = loadCheckTable(name);
      const tour = buildTour(t);
      expect(tour.covers).toBe(tour.total);
      expect(replay(t, tour)).toEqual(enumerateEdges(t));
    }
  });

  it('covers every SIC of every reachable stable total state on random tables', () => {
    fc.assert(
      fc.property(arbitraryAnalysisTable(), (t) => {
        const tour = buildTour(t);
        const edges = enumerateEdges(t);
        expect(tour.total).toBe(edges.size);
        expect(tour.covers).toBe(edges.size);
        expect(replay(t, tour)).toEqual(edges);
        // no segment is empty, and the walk stays short-ish: at most a BFS hop path per edge
        for (const seg of tour.segments) expect(seg.steps.length).toBeGreaterThan(0);
        const steps = tour.segments.reduce((sum, s) => sum + s.steps.length, 0);
        expect(steps).toBeLessThanOrEqual(edges.size * (1 + t.states.length * countColumns(t.inputs.length)));
      }),
      { numRuns: 300, seed: 0x5eed },
    );
  });

  it('starts a new segment when states are only reachable from another power-up column', () => {
    // Invented example: a mode switch read at power-up. The reset state is transient: at mode 0 it
    // goes to `normal`, at mode 1 to `service`, and no single-input change leads from one to the other.
    const t = interchangeToTable({
      format: 'quiesce-flow-table',
      version: 1,
      name: 'mode_switch',
      inputs: ['mode'],
      outputs: [],
      states: ['boot', 'normal', 'service'],
      reset: 'boot',
      rows: { boot: { '0': 'normal', '1': 'service' }, normal: { '0': 'normal', '1': 'normal' }, service: { '0': 'service', '1': 'service' } },
    });
    const tour = buildTour(t);
    expect(tour.segments).toEqual([
      { powerUp: '0', steps: ['1', '0'] },
      { powerUp: '1', steps: ['0', '1'] },
    ]);
    expect([tour.covers, tour.total]).toEqual([4, 4]);
    expect(replay(t, tour)).toEqual(enumerateEdges(t));
  });
});
