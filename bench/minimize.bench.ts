/** Exact state minimization of every KISS2 benchmark file (MCNC/LGSynth'91 benchmark set, check-data/kiss2). */
import { readdirSync, readFileSync } from 'node:fs';
import { parseKiss2 } from '../src/lib/engine/formats/kiss2';
import { createTable, type FlowTable } from '../src/lib/engine/model';
import { minimizeTable } from '../src/lib/engine/minimize/index';
import { KISS2_DIR } from '../tests/support/check-data';
import { timeMedian, type BenchRow } from './types';

/** Budgets large enough that a search is cut only if it is far off the target. */
const OPTIONS = { timeBudgetMs: 10_000, nodeBudget: 1_000_000 };

/** A deterministic random table (LCG) with many don't-cares, so that compatibles abound. */
function randomTable(states: number, inputs: number, specified: number, cared: number, seed: number): FlowTable {
  let x = seed >>> 0;
  const rnd = () => (x = (Math.imul(x, 1103515245) + 12345) >>> 0) / 4294967296;
  const t = createTable({
    name: `random${states}`,
    inputs: Array.from({ length: inputs }, (_, k) => `in${k}`),
    outputs: ['out0', 'out1'],
    states: Array.from({ length: states }, (_, k) => `s${k}`),
  });
  for (let cell = 0; cell < t.next.length; cell++) {
    if (rnd() < specified) t.next[cell] = Math.floor(rnd() * states);
    for (let k = 0; k < 2; k++) {
      if (rnd() >= cared) continue;
      t.outCare[cell]! |= 1 << k;
      if (rnd() < 0.5) t.outValue[cell]! |= 1 << k;
    }
  }
  return t;
}

/** Times minimizeTable on each benchmark (median of 5 runs after a warm-up), then on random tables with the default budget. */
export async function run(): Promise<BenchRow[]> {
  const rows: BenchRow[] = [];
  const files = readdirSync(KISS2_DIR)
    .filter((f) => /\.kiss2?$/.test(f))
    .sort();
  for (const file of files) {
    const name = file.replace(/\.kiss2?$/, '');
    const t = parseKiss2(readFileSync(KISS2_DIR + file, 'utf8'), { name });
    const r = minimizeTable(t, OPTIONS);
    const ms = timeMedian(() => minimizeTable(t, OPTIONS), 5, 1);
    const n = t.states.length;
    const value = `${n} -> ${r.classes.length} states, ${r.exact ? 'exact' : `not exact (${r.stats.method})`}, ${r.stats.nodes} nodes, ${r.stats.primeCompatibles} primes, ${ms.toFixed(1)} ms`;
    rows.push(
      n <= 20
        ? { group: 'minimize', case: name, value, target: '< 1 s for <= 20 states exact', ok: r.exact && ms < 1000 }
        : { group: 'minimize', case: name, value, target: 'exact (no time target above 20 states)', ok: r.exact },
    );
  }
  // beyond the benchmarks: random tables where the compatibles explode; the default 2 s budget applies
  for (const [states, inputs, specified, cared] of [
    [24, 2, 0.6, 0.3],
    [30, 2, 0.4, 0.2],
    [40, 3, 0.3, 0.2],
    [100, 4, 0.2, 0.1],
  ] as const) {
    const t = randomTable(states, inputs, specified, cared, 12345 + states);
    const r = minimizeTable(t);
    rows.push({
      group: 'minimize',
      case: `random ${states} states, ${inputs} inputs, default budget`,
      value: `${states} -> ${r.classes.length} states (at least ${r.stats.lowerBound}), ${r.exact ? 'exact' : `not exact (${r.stats.method})`}, ${r.stats.ms.toFixed(0)} ms`,
      target: 'stays within the 2 s budget',
      ok: r.stats.ms < 2200,
    });
  }
  return rows;
}
