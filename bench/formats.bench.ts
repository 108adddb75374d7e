/** Parse and print times of the source formats on a large random table and on the KISS2 benchmark set. */
import { readdirSync, readFileSync } from 'node:fs';
import { exportTable, FORMATS, parseSource } from '../src/lib/engine/formats/index';
import { countColumns, createTable, NONE, type FlowTable } from '../src/lib/engine/model';
import { timeMedian, type BenchRow } from './types';
import { KISS2_DIR } from '../tests/support/check-data';

/** A deterministic pseudo-random table (xorshift), half the cells specified, with don't-cares. */
function randomTable(inputs: number, states: number, outputs: number): FlowTable {
  let x = 0x2545f491;
  const rnd = () => {
    x ^= x << 13;
    x ^= x >>> 17;
    x ^= x << 5;
    return (x >>> 0) / 4294967296;
  };
  const t = createTable({
    name: 'bench',
    inputs: Array.from({ length: inputs }, (_, k) => `in${k}`),
    outputs: Array.from({ length: outputs }, (_, k) => `out${k}`),
    states: Array.from({ length: states }, (_, k) => `s${k}`),
  });
  const cols = countColumns(inputs);
  const mask = (1 << outputs) - 1;
  for (let i = 0; i < states * cols; i++) {
    if (rnd() < 0.5) continue;
    // mostly stable cells and a few neighbours, so rows have runs of equal cells as real tables do
    const s = Math.floor(i / cols);
    t.next[i] = rnd() < 0.7 ? s : (s + 1 + Math.floor(rnd() * 3)) % states;
    t.outCare[i] = Math.floor(rnd() * (mask + 1)) >>> 0;
    t.outValue[i] = (Math.floor(rnd() * (mask + 1)) & t.outCare[i]!) >>> 0;
  }
  return t;
}

/** Bench rows: print and parse of every format. */
export async function run(): Promise<BenchRow[]> {
  const rows: BenchRow[] = [];
  const big = randomTable(6, 128, 4);
  let specified = 0;
  for (const v of big.next) if (v !== NONE) specified++;
  for (const f of FORMATS) {
    const text = exportTable(big, f);
    const print = timeMedian(() => exportTable(big, f), 5);
    const parse = timeMedian(() => parseSource(text, f, { name: 'bench' }), 5);
    rows.push({ group: 'formats', case: `${f}: 128 states x 64 columns (${specified} cells), ${(text.length / 1024).toFixed(0)} KiB`, value: `print ${print.toFixed(1)} ms, parse ${parse.toFixed(1)} ms` });
  }
  const dir = KISS2_DIR;
  let files: string[] = [];
  try {
    files = readdirSync(dir).filter((f) => f.endsWith('.kiss2'));
  } catch {
    rows.push({ group: 'formats', case: 'KISS2 benchmark set', value: 'check-data not found' });
  }
  if (files.length) {
    const sources = files.map((f) => readFileSync(dir + f, 'utf8'));
    const ms = timeMedian(() => {
      for (const s of sources) exportTable(parseSource(s, 'kiss2'), 'text');
    }, 5);
    rows.push({ group: 'formats', case: `KISS2 -> text, all ${files.length} benchmark files`, value: `${ms.toFixed(1)} ms` });
  }
  return rows;
}
