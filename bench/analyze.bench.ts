/**
 * Analysis benchmark: analyzeTable on random stable-heavy flow tables (each row stable in several
 * columns, transitions mostly towards states stable in the new column, plus noise: unspecified
 * cells and random next states, which make chains and loops), timed next to one plain pass over
 * the same typed arrays. Also fill, tour and a 64 x 64 table against the workbench's live budget.
 */
import { countColumns, createTable, NONE, type FlowTable } from '../src/lib/engine/model';
import { analyzeTable } from '../src/lib/engine/analyze';
import { fillOutputs } from '../src/lib/engine/fill';
import { buildTour } from '../src/lib/engine/tour';
import { createRandom } from '../tests/support/seeded-random';
import { median, timeMedian, type BenchRow } from './types';

/** A random stable-heavy table with `states` rows, `inputs` inputs and 4 outputs. */
export function buildRandomTable(states: number, inputs: number, seed: number): FlowTable {
  const rnd = createRandom(seed);
  const outputs = 4;
  const t = createTable({
    name: `random_${states}x${inputs}`,
    inputs: Array.from({ length: inputs }, (_, i) => `in${i}`),
    outputs: Array.from({ length: outputs }, (_, i) => `out${i}`),
    states: Array.from({ length: states }, (_, i) => `s${i}`),
  });
  const cols = countColumns(inputs);
  const stableIn: number[][] = Array.from({ length: cols }, () => []);
  const perRow = Math.max(2, cols >> 3);
  for (let s = 0; s < states; s++) {
    for (let i = 0; i < perRow; i++) {
      const c = Math.floor(rnd() * cols);
      if (t.next[s * cols + c] === s) continue;
      t.next[s * cols + c] = s;
      stableIn[c]!.push(s);
    }
  }
  for (let c = 0; c < cols; c++) {
    if (stableIn[c]!.length === 0) {
      const s = Math.floor(rnd() * states);
      t.next[s * cols + c] = s;
      stableIn[c]!.push(s);
    }
  }
  const mask = (1 << outputs) - 1;
  for (let s = 0; s < states; s++) {
    for (let c = 0; c < cols; c++) {
      const cell = s * cols + c;
      if (t.next[cell] === s) {
        t.outCare[cell] = mask;
        t.outValue[cell] = Math.floor(rnd() * (mask + 1));
        continue;
      }
      const r = rnd();
      if (r < 0.05) t.next[cell] = NONE;
      else if (r < 0.1) t.next[cell] = Math.floor(rnd() * states);
      else {
        const here = stableIn[c]!;
        t.next[cell] = here[Math.floor(rnd() * here.length)]!;
      }
      if (t.next[cell] !== NONE && rnd() < 0.3) {
        t.outCare[cell] = Math.floor(rnd() * (mask + 1));
        t.outValue[cell] = Math.floor(rnd() * (mask + 1)) & t.outCare[cell]!;
      }
    }
  }
  return t;
}

/** One plain pass over the typed arrays analysis reads: the floor any analysis is measured against. */
function sumArrays(t: FlowTable): number {
  let sum = 0;
  const { next, outCare } = t;
  for (let i = 0; i < next.length; i++) sum += next[i]! + (outCare[i]! & 1);
  return sum;
}

/**
 * Median wall time and median CPU time (this process, user + system) in ms after warm-up. The
 * machine is shared, so wall time alone mostly measures the neighbours; CPU time does not count
 * time spent waiting for a core.
 */
function timeBoth(fn: () => unknown, runs: number, warmup: number): { wall: number; cpu: number } {
  for (let i = 0; i < warmup; i++) fn();
  const wall: number[] = [];
  const cpu: number[] = [];
  for (let i = 0; i < runs; i++) {
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    fn();
    wall.push(performance.now() - t0);
    const c = process.cpuUsage(c0);
    cpu.push((c.user + c.system) / 1000);
  }
  return { wall: median(wall), cpu: median(cpu) };
}

const formatMs = (ms: number) => (ms < 1 ? `${ms.toFixed(3)} ms` : ms < 100 ? `${ms.toFixed(1)} ms` : `${ms.toFixed(0)} ms`);

/** Runs the analysis benchmark rows. */
export async function run(): Promise<BenchRow[]> {
  const rows: BenchRow[] = [];
  const cases = [
    { states: 64, inputs: 6, target: 100, runs: 9, label: 'live findings budget' },
    { states: 256, inputs: 8, target: 50, runs: 9, label: '' },
    { states: 1024, inputs: 10, target: 1500, runs: 5, label: '' },
  ];
  for (const c of cases) {
    const t = buildRandomTable(c.states, c.inputs, 0x51ce + c.states);
    const cols = countColumns(c.inputs);
    let sink = 0;
    const plain = timeMedian(() => (sink += sumArrays(t)), 21, 5);
    if (!Number.isFinite(sink)) throw new Error('plain pass overflowed');
    let last = analyzeTable(t);
    const time = timeBoth(() => (last = analyzeTable(t)), c.runs, 2);
    // judged on the smaller of the two: CPU time can exceed wall time by parallel GC threads
    const ms = Math.min(time.wall, time.cpu);
    const name = `analyze ${c.states} states x ${cols} columns (${c.inputs} inputs)${c.label ? `, ${c.label}` : ''}`;
    rows.push({
      group: 'analysis',
      case: name,
      value: `${formatMs(time.wall)} wall, ${formatMs(time.cpu)} cpu; plain pass ${formatMs(plain)}; ratio ${(ms / Math.max(plain, 1e-6)).toFixed(0)}x`,
      target: `< ${c.target} ms`,
      ok: ms < c.target,
    });
    rows.push({
      group: 'analysis',
      case: `  shape of the ${c.states}-state table`,
      value: `${last.stable.length} stable, ${last.reachableStable.length} reachable stable, ${last.counts.error} errors, ${last.counts.warning} warnings`,
    });
    if (c.states <= 256) {
      const fillMs = timeMedian(() => fillOutputs(t), 5, 1);
      rows.push({ group: 'analysis', case: `  fill outputs, ${c.states} states`, value: formatMs(fillMs) });
      const tourMs = timeMedian(() => buildTour(t), 3, 1);
      const tour = buildTour(t);
      const steps = tour.segments.reduce((n, s) => n + s.steps.length, 0);
      rows.push({ group: 'analysis', case: `  tour, ${c.states} states`, value: `${formatMs(tourMs)}; ${steps} steps for ${tour.total} edges` });
    }
  }
  return rows;
}
