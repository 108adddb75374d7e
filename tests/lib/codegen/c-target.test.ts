/**
 * The C target end to end: for the demo tables (every double-change policy), every KISS2
 * benchmark of the check data (MCNC / LGSynth'91 benchmark set, see check-data/README.md),
 * random tables and hostile names, the bundle is generated, built with the strict flags of the
 * issue through its own Makefile, its unit tests run, and random walks through ./replay are held
 * line by line against the engine's simulation (simulate.ts, which follows runtime.ts).
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { DOUBLE_CHANGE_POLICIES, type FlowTable } from '../../../src/lib/engine/model';
import { generateBundle } from '../../../src/lib/codegen/bundle';
import {
  ARM_CFLAGS,
  HOST_CFLAGS,
  cloneWithPolicy,
  engineReplayLines,
  hostileTable,
  wideTable,
  loadDemoTables,
  loadKiss2Tables,
  parseSummary,
  randomWalk,
  run,
  sampleRandomTables,
  writeFiles,
} from './support';

const work = mkdtempSync(join(tmpdir(), 'quiesce-codegen-c-'));
afterAll(() => rmSync(work, { recursive: true, force: true }));

interface Case {
  id: string;
  table: FlowTable;
  prefix?: string;
}

const demos = loadDemoTables();
const cases: Case[] = [
  ...demos.flatMap(({ file, table }) => DOUBLE_CHANGE_POLICIES.map((p) => ({ id: `demo ${file} ${p}`, table: cloneWithPolicy(table, p) }))),
  ...loadKiss2Tables().map(({ file, table }) => ({ id: `kiss2 ${file}`, table })),
  ...sampleRandomTables(6, 4242).map((table, i) => ({ id: `random ${i + 1}`, table })),
  { id: 'hostile names', table: hostileTable() },
  { id: '300 states (16-bit codes), no outputs', table: wideTable() },
];

/** Generates, builds with the Makefile, runs the unit tests; returns the bundle folder and prefix. */
async function buildBundle(c: Case, index: number): Promise<{ dir: string; prefix: string; summary: { passed: number; failed: number } }> {
  const bundle = await generateBundle(c.table, { target: 'c', revision: 'r1', ...(c.prefix ? { prefix: c.prefix } : {}) });
  const dir = join(work, `b${index}`);
  writeFiles(dir, bundle.files);
  const cflags = `CFLAGS=${HOST_CFLAGS.join(' ')}`;
  const test = await run('make', ['-s', cflags, 'test'], { cwd: dir });
  expect(test.stderr, `${c.id}: compiler or harness complained`).toBe('');
  expect(test.code, `${c.id}: make test failed:\n${test.stdout.slice(-2000)}`).toBe(0);
  const summary = parseSummary(test.stdout);
  expect(summary, `${c.id}: no "N passed, N failed" last line`).not.toBeNull();
  const replay = await run('make', ['-s', cflags, 'replay'], { cwd: dir });
  expect(replay.stderr + replay.stdout, `${c.id}: replay build`).toBe('');
  expect(replay.code).toBe(0);
  return { dir, prefix: bundle.manifest.identifiers.prefix, summary: summary! };
}

describe.concurrent('C bundles build cleanly, pass their own tests and replay like the engine', () => {
  cases.forEach((c, index) => {
    it(c.id, async () => {
      const { dir, summary } = await buildBundle(c, index);
      expect(summary.failed).toBe(0);
      // power-up in every column is always tested, so a harness never passes vacuously
      expect(summary.passed).toBeGreaterThanOrEqual(1 << c.table.inputs.length);
      for (let w = 0; w < 3; w++) {
        const walk = randomWalk(c.table, 1000 * index + w, 120);
        const out = await run(join(dir, 'replay'), [], { input: `${walk.join('\n')}\n` });
        expect(out.code, out.stderr).toBe(0);
        expect(out.stdout.trimEnd().split('\n')).toEqual(engineReplayLines(c.table, walk));
      }
    });
  });
});

describe('C bundles of the demo tables', () => {
  it.each(demos.flatMap((d) => DOUBLE_CHANGE_POLICIES.map((p) => [d.file, p, d.table] as const)))('%s (%s) compiles for Cortex-M0+ with -Werror and is clean under cppcheck', async (_file, policy, table) => {
    const bundle = await generateBundle(cloneWithPolicy(table, policy), { target: 'c', revision: 'r2' });
    const dir = mkdtempSync(join(work, 'demo-'));
    writeFiles(dir, bundle.files);
    const p = bundle.manifest.identifiers.prefix;
    const arm = await run('arm-none-eabi-gcc', [...ARM_CFLAGS, `${p}.c`, '-o', `${p}.o`], { cwd: dir });
    expect(arm.stderr).toBe('');
    expect(arm.code).toBe(0);
    const check = await run('cppcheck', ['--error-exitcode=1', '--enable=warning,style,performance,portability', '--std=c99', '--inline-suppr', '-q', '--suppress=missingIncludeSystem', '.'], { cwd: dir });
    expect(check.stderr + check.stdout).toBe('');
    expect(check.code).toBe(0);
  });

  it('the generated harness catches a wrong table entry (exit status 1, failures counted)', async () => {
    const { table } = demos[0]!;
    const bundle = await generateBundle(table, { target: 'c' });
    const dir = mkdtempSync(join(work, 'mutant-'));
    writeFiles(dir, bundle.files);
    const p = bundle.manifest.identifiers.prefix;
    const src = readFileSync(join(dir, `${p}.c`), 'utf8');
    // swap the first settled next state of the reset row for another state code
    const mutated = src.replace(/(_next\[\d+u\] = \{\n {4}\/\*[^\n]*\*\/\n {4})(\d+)u/, (_m, head: string, code: string) => `${head}${(Number(code) + 1) % table.states.length}u`);
    expect(mutated).not.toBe(src);
    writeFileSync(join(dir, `${p}.c`), mutated);
    const res = await run('make', ['-s', `CFLAGS=${HOST_CFLAGS.join(' ')}`, 'test'], { cwd: dir });
    expect(res.code).not.toBe(0);
    const summary = parseSummary(res.stdout);
    expect(summary?.failed).toBeGreaterThan(0);
    expect(res.stdout).toMatch(/^FAIL /m);
  });
});
