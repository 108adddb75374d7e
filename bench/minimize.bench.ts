/** Exact state minimization of every KISS2 benchmark file (MCNC/LGSynth'91 benchmark set, check-data/kiss2). */
import { readdirSync, readFileSync } from 'node:fs';
import { parseKiss2 } from '../src/lib/engine/formats/kiss2';
import { minimizeTable } from '../src/lib/engine/minimize/index';
import { KISS2_DIR } from '../tests/support/check-data';
import { timeMedian, type BenchRow } from './types';

/** Budgets large enough that a search is cut only if it is far off the target. */
const OPTIONS = { timeBudgetMs: 10_000, nodeBudget: 1_000_000 };

/** Times minimizeTable on each benchmark (median of 5 runs after a warm-up). */
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
  return rows;
}
