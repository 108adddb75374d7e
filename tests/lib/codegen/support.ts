/**
 * Shared helpers of the codegen suites: the tables they generate for, bundle writing, process
 * runs with a small concurrency limit (the machine has 2 cores), random walks, and the engine's
 * expected replay lines.
 */
import { spawn } from 'node:child_process';
import { mkdirSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import fc from 'fast-check';
import { cloneTable, columnToKey, createTable, interchangeToTable, type DoubleChangePolicy, type FlowTable } from '../../../src/lib/engine/model';
import { parseKiss2 } from '../../../src/lib/engine/formats/kiss2';
import { simulateTable } from '../../../src/lib/engine/simulate';
import type { BundleFile } from '../../../src/lib/codegen/bundle';
import { arbitraryTable } from '../../support/arbitrary-table';
import { createRandom } from '../../support/seeded-random';

/** The strict host flags of the issue, plus -Werror. */
export const HOST_CFLAGS = ['-std=c99', '-O2', '-Wall', '-Wextra', '-Wpedantic', '-Wconversion', '-Wshadow', '-Werror'];

/** Cortex-M0+ flags of the issue (object files only). */
export const ARM_CFLAGS = ['-std=c99', '-mcpu=cortex-m0plus', '-mthumb', '-Os', '-Wall', '-Wextra', '-Wpedantic', '-Wconversion', '-Wshadow', '-Werror', '-c'];

const here = dirname(new URL(import.meta.url).pathname);
const root = join(here, '..', '..', '..');

/** Folder of the external check data (MCNC / LGSynth'91 KISS2 benchmark set, see check-data/README.md). */
import { KISS2_DIR } from '../../support/check-data';

export { KISS2_DIR };

/** The demo tables (invented examples of fictional makers), also the app's demo data. */
export function loadDemoTables(): { file: string; table: FlowTable }[] {
  const dir = join(root, 'tests', 'fixtures', 'demo');
  return readdirSync(dir)
    .filter((f) => f.endsWith('.json'))
    .sort()
    .map((file) => ({ file, table: interchangeToTable(JSON.parse(readFileSync(join(dir, file), 'utf8'))) }));
}

/** Every benchmark of the check-data KISS2 folder, parsed, in file order. */
export function loadKiss2Tables(): { file: string; table: FlowTable }[] {
  return readdirSync(KISS2_DIR)
    .filter((f) => /\.kiss2?$/.test(f))
    .sort()
    .map((file) => ({ file, table: parseKiss2(readFileSync(join(KISS2_DIR, file), 'utf8'), { name: file.replace(/\.kiss2?$/, '') }) }));
}

/** A few random tables from the shared generator, fixed seed so every run sees the same ones. */
export function sampleRandomTables(count: number, seed: number): FlowTable[] {
  return fc.sample(arbitraryTable({ maxInputs: 4, maxOutputs: 4, maxStates: 8 }), { numRuns: count, seed });
}

/** A copy of `t` whose settings use another double-change policy. */
export function cloneWithPolicy(t: FlowTable, policy: DoubleChangePolicy): FlowTable {
  const c = cloneTable(t);
  c.settings = { ...c.settings, doubleChange: policy };
  return c;
}

/** Hostile names of the issue: keywords of both targets, a leading digit, separators that collide after sanitizing, non-ASCII, 64 characters. */
export const HOSTILE_STATES = ['int', 'match', 'self', '2fast', 'a-b', 'a b', 'a_b', 'Ünlock', 'Unlock', 'x'.repeat(63) + 'y', 'x'.repeat(63) + 'z', '??=x', 'Self', 'Ω'];

/** A table whose states, inputs and outputs carry hostile names; every cell specified, with races to settle. */
export function hostileTable(): FlowTable {
  const states = HOSTILE_STATES;
  const t = interchangeToTable({
    format: 'quiesce-flow-table',
    version: 1,
    name: 'match',
    inputs: ['in-1', 'in 1', 'Self'],
    outputs: ['const', 'out *x', '??='],
    states,
    reset: 'self',
    rows: Object.fromEntries(
      states.map((s, i) => [
        s,
        Object.fromEntries(
          ['000', '100', '010', '110', '001', '101', '011', '111'].map((key, c) => {
            // state i is stable in columns where (i + c) % 3 == 0; other cells lead one step on
            const stable = (i + c) % 3 === 0;
            const next = stable ? s : states[(i + 1) % states.length]!;
            const bits = `${(i >> 0) & 1}${(c >> 1) & 1}${stable ? (i + c) & 1 : '-'}`;
            return [key, `${next}/${bits}`];
          }),
        ),
      ]),
    ),
    settings: { doubleChange: 'stepwise' },
    scenarios: [{ name: 'a "scenario" */ with ??/ odd\nname', inputs: ['000', '100', '110', '111'] }],
  });
  return t;
}

/**
 * A table past the one-byte state codes (300 states, so 16-bit codes) with no outputs: state s is
 * stable in column s mod 4, and every other cell moves one state on, so settling walks chains.
 */
export function wideTable(): FlowTable {
  const states = Array.from({ length: 300 }, (_, i) => `w${i}`);
  const t = createTable({ name: 'wide', inputs: ['a', 'b'], outputs: [], states, settings: { doubleChange: 'direct' } });
  for (let s = 0; s < states.length; s++) for (let c = 0; c < 4; c++) t.next[s * 4 + c] = s % 4 === c ? s : (s + 1) % states.length;
  return t;
}

/** Writes bundle files under `dir`. */
export function writeFiles(dir: string, files: BundleFile[]): void {
  for (const f of files) {
    const p = join(dir, f.path);
    mkdirSync(dirname(p), { recursive: true });
    writeFileSync(p, f.content);
  }
}

/** Result of one process run. */
export interface RunResult {
  code: number;
  stdout: string;
  stderr: string;
}

let active = 0;
const waiting: (() => void)[] = [];
/** Most child processes of the suite running at once. */
export const PROCESS_LIMIT = 2;

/** Runs a command (at most PROCESS_LIMIT at once), feeding `input` to stdin. */
export async function run(cmd: string, args: string[], opts: { cwd?: string; input?: string; env?: NodeJS.ProcessEnv } = {}): Promise<RunResult> {
  if (active >= PROCESS_LIMIT) await new Promise<void>((r) => waiting.push(r));
  active++;
  try {
    return await new Promise<RunResult>((resolve, reject) => {
      const child = spawn(cmd, args, { cwd: opts.cwd, env: opts.env ?? process.env, stdio: ['pipe', 'pipe', 'pipe'] });
      const out: Buffer[] = [];
      const err: Buffer[] = [];
      child.stdout.on('data', (d: Buffer) => out.push(d));
      child.stderr.on('data', (d: Buffer) => err.push(d));
      child.on('error', reject);
      child.on('close', (code) => resolve({ code: code ?? -1, stdout: Buffer.concat(out).toString('utf8'), stderr: Buffer.concat(err).toString('utf8') }));
      child.stdin.on('error', () => undefined);
      child.stdin.end(opts.input ?? '');
    });
  } finally {
    active--;
    waiting.shift()?.();
  }
}

/**
 * A random walk of snapshots (column keys), the first being the power-up: mostly single-input
 * changes, with some double changes, some of three bits, and some repeats.
 */
export function randomWalk(t: FlowTable, seed: number, length: number): string[] {
  const n = t.inputs.length;
  const rnd = createRandom(seed);
  let c = Math.floor(rnd() * (1 << n));
  const out = [columnToKey(c, n)];
  const flip = () => (c ^= 1 << Math.floor(rnd() * n));
  for (let i = 1; i < length; i++) {
    const r = rnd();
    if (r < 0.75 || n === 1) flip();
    else if (r < 0.92) {
      const a = Math.floor(rnd() * n);
      const b = (a + 1 + Math.floor(rnd() * (n - 1))) % n;
      c ^= (1 << a) | (1 << b);
    } else if (r < 0.97 && n >= 3) c ^= 7 << Math.floor(rnd() * (n - 2));
    out.push(columnToKey(c, n));
  }
  return out;
}

/** The replay lines the engine's simulation gives for a walk (the protocol of the generated replay programs). */
export function engineReplayLines(t: FlowTable, walk: string[]): string[] {
  return simulateTable(t, walk).steps.map((s) => `${s.fault === 'none' ? '' : 'FAULT '}${s.state}${t.outputs.length ? ` ${s.outputs}` : ''}`);
}

/** Last line of a test harness run, `N passed, N failed`, parsed. */
export function parseSummary(stdout: string): { passed: number; failed: number } | null {
  const lines = stdout.trimEnd().split('\n');
  const m = /^(\d+) passed, (\d+) failed$/.exec(lines[lines.length - 1] ?? '');
  return m ? { passed: Number(m[1]), failed: Number(m[2]) } : null;
}
