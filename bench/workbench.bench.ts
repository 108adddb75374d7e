/**
 * Workbench responsiveness: the work done per keystroke on a 64-state × 64-column table
 * (6 inputs): parse the edited source, analyze it, and reprint it after a grid edit; also a
 * random table with about 1800 listed findings, the worst case for the findings list, and the cost
 * of cloning its analysis out of the worker. Target: findings within 100 ms of a keystroke (issue:
 * controller workbench).
 */
import { analyzeTable } from '../src/lib/engine/analyze';
import { parseText, tableToText } from '../src/lib/engine/formats/text';
import { createTable, type FlowTable } from '../src/lib/engine/model';
import { applyEdit } from '../src/lib/client/table-edits';
import { workbenchReducer, initWorkbench } from '../src/lib/client/workbench-store';
import { createRandom } from '../tests/support/seeded-random';
import { timeMedian, type BenchRow } from './types';

/**
 * A 64 × 64 table shaped like a designed one: state k is stable in column k, every other cell
 * moves straight to the owner of its column with that owner's outputs, and 3% of the moving
 * cells are left unspecified, so analysis has real findings to report (a few dozen).
 */
function buildDesignedTable(inputs: number): FlowTable {
  const rnd = createRandom(64);
  const cols = 1 << inputs;
  const t = createTable({
    name: 'bench_64x64',
    inputs: Array.from({ length: inputs }, (_, i) => `in${i}`),
    outputs: ['y0', 'y1', 'y2', 'y3'],
    states: Array.from({ length: cols }, (_, i) => `s${i}`),
  });
  for (let s = 0; s < cols; s++)
    for (let c = 0; c < cols; c++) {
      const cell = s * cols + c;
      if (c !== s && rnd() < 0.03) continue;
      t.next[cell] = c;
      t.outCare[cell] = 0xf;
      t.outValue[cell] = c & 0xf;
    }
  return t;
}

/** A random 64 × 64 table: thousands of findings, the worst case for the findings list. */
function buildRandomTable(states: number, inputs: number): FlowTable {
  const rnd = createRandom(65);
  const t = createTable({
    name: 'bench_random',
    inputs: Array.from({ length: inputs }, (_, i) => `in${i}`),
    outputs: ['y0', 'y1', 'y2', 'y3'],
    states: Array.from({ length: states }, (_, i) => `s${i}`),
  });
  const cols = 1 << inputs;
  for (let s = 0; s < states; s++)
    for (let c = 0; c < cols; c++) {
      const cell = s * cols + c;
      const r = rnd();
      if (r < 0.08) continue;
      t.next[cell] = r < 0.45 ? s : Math.floor(rnd() * states);
      t.outCare[cell] = t.next[cell] === s ? 0xf : Math.floor(rnd() * 16);
      t.outValue[cell] = Math.floor(rnd() * 16) & t.outCare[cell]!;
    }
  return t;
}

/** Runs the workbench benchmark rows. */
export async function run(): Promise<BenchRow[]> {
  const t = buildDesignedTable(6);
  const findings = analyzeTable(t).findings.length;
  const source = tableToText(t);
  // A keystroke in the source: the cell of one `STATE CUBE CELL` line of s5 now goes to s7.
  const lines = source.split('\n');
  const row = lines.findIndex((l) => /^\s+s5\s/.test(l));
  const edited = [...lines];
  edited[row] = edited[row]!.replace(/\S+$/, 's7/0000');
  const editedSource = edited.join('\n');
  const parse = timeMedian(() => parseText(editedSource), 9, 2);
  const analyze = timeMedian(() => analyzeTable(t), 9, 2);
  const keystroke = timeMedian(() => analyzeTable(parseText(editedSource)), 9, 2);
  // A grid edit: the reducer applies the edit and reprints the source; then analysis runs.
  const state = initWorkbench(t, source);
  const gridEdit = timeMedian(() => {
    const next = workbenchReducer(state, { type: 'edit', edit: { kind: 'set-next', state: 3, column: 5, next: 9 } });
    analyzeTable(next.table);
  }, 9, 2);
  const reprint = timeMedian(() => tableToText(applyEdit(t, { kind: 'set-next', state: 1, column: 2, next: 4 })), 9, 2);
  const random = buildRandomTable(64, 6);
  const randomSource = tableToText(random);
  // the worker's round trip: parse, analyze, and the structured clone its postMessage makes of the result
  const randomKeystroke = timeMedian(() => structuredClone(analyzeTable(parseText(randomSource))), 9, 2);
  const randomAnalyze = timeMedian(() => analyzeTable(random), 9, 2);
  const randomAnalysis = analyzeTable(random);
  const randomFindings = randomAnalysis.findings.length;
  const randomClone = timeMedian(() => structuredClone(randomAnalysis), 9, 2);
  const ok = (ms: number) => ms < 100;
  return [
    { group: 'workbench', case: 'parse .qfl 64 states × 64 columns', value: `${parse.toFixed(1)} ms` },
    { group: 'workbench', case: `analyze 64 × 64 (${findings} findings)`, value: `${analyze.toFixed(1)} ms` },
    { group: 'workbench', case: 'keystroke in source: parse + analyze', value: `${keystroke.toFixed(1)} ms`, target: '< 100 ms', ok: ok(keystroke) },
    { group: 'workbench', case: 'grid edit: reducer (edit + reprint) + analyze', value: `${gridEdit.toFixed(1)} ms`, target: '< 100 ms', ok: ok(gridEdit) },
    { group: 'workbench', case: 'grid edit: apply + reprint source', value: `${reprint.toFixed(1)} ms` },
    { group: 'workbench', case: `random 64 × 64, ${randomFindings} findings listed: parse + analyze + clone (worker)`, value: `${randomKeystroke.toFixed(1)} ms`, target: '< 100 ms', ok: ok(randomKeystroke) },
    { group: 'workbench', case: '  analyze only', value: `${randomAnalyze.toFixed(1)} ms` },
    { group: 'workbench', case: '  structured clone of the analysis', value: `${randomClone.toFixed(1)} ms` },
  ];
}
