/** `npm run bench`: runs every bench/*.bench.ts module (or those named on the command line) and prints one table. */
import { readdirSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import type { BenchRow } from './types';

const here = dirname(fileURLToPath(import.meta.url));
const only = process.argv.slice(2);
const modules = readdirSync(here)
  .filter((f) => f.endsWith('.bench.ts'))
  .filter((f) => only.length === 0 || only.some((o) => f.startsWith(o)))
  .sort();

const rows: BenchRow[] = [];
for (const file of modules) {
  const mod = (await import(pathToFileURL(join(here, file)).href)) as { run: () => Promise<BenchRow[]> };
  process.stderr.write(`bench: ${file} …\n`);
  try {
    rows.push(...(await mod.run()));
  } catch (e) {
    rows.push({ group: file.replace('.bench.ts', ''), case: 'failed to run', value: e instanceof Error ? e.message.split('\n')[0]! : String(e), ok: false });
  }
}

const header = ['group', 'case', 'value', 'target', 'ok'];
const cells = rows.map((r) => [r.group, r.case, r.value, r.target ?? '', r.ok === undefined ? '' : r.ok ? 'yes' : 'NO']);
const widths = header.map((h, i) => Math.max(h.length, ...cells.map((c) => c[i]!.length)));
const line = (c: string[]) => `| ${c.map((x, i) => x.padEnd(widths[i]!)).join(' | ')} |`;
console.log(line(header));
console.log(`|${widths.map((w) => '-'.repeat(w + 2)).join('|')}|`);
for (const c of cells) console.log(line(c));
