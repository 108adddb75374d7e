import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { parseCsv } from '../../../src/lib/engine/formats/csv';
import { parseJson, tableToJson } from '../../../src/lib/engine/formats/json';
import { parseKiss2 } from '../../../src/lib/engine/formats/kiss2';
import { parseText, tableToText } from '../../../src/lib/engine/formats/text';
import { tablesEqual } from '../../../src/lib/engine/model';
import { KISS2_DIR } from '../../support/check-data';

const BIN = new URL('../../../bin/quiesce.mjs', import.meta.url).pathname;
const KISS = KISS2_DIR.slice(0, -1);
const DOOR = new URL('../../fixtures/formats/door-interlock.qfl', import.meta.url).pathname;
const tmp = mkdtempSync(join(tmpdir(), 'quiesce-cli-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

function quiesce(args: string[], input?: string): { code: number; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, [BIN, ...args], { input: input ?? '', encoding: 'utf8', timeout: 60_000 });
  return { code: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
}

function file(name: string, content: string | Buffer): string {
  const p = join(tmp, name);
  writeFileSync(p, content);
  return p;
}

/** No stack trace lines (`    at f (file:1:2)`) ever reach the user. */
function expectNoStack(stderr: string): void {
  expect(stderr).not.toMatch(/^\s+at .+:\d+:\d+\)?$/m);
  expect(stderr).not.toMatch(/node:internal|\.ts:\d+:\d+/);
}

describe('quiesce CLI: help and convert', () => {
  it('prints help and exits 0', () => {
    const r = quiesce(['--help']);
    expect(r.code).toBe(0);
    for (const c of ['analyze', 'minimize', 'simulate', 'fill', 'convert']) expect(r.stdout).toContain(`  ${c}`);
    const h = quiesce(['help', 'simulate']);
    expect(h.code).toBe(0);
    expect(h.stdout).toContain('usage: quiesce simulate FILE --inputs');
  });

  it('converts .qfl to JSON, CSV, KISS2 and text', () => {
    const door = parseText(readFileSync(DOOR, 'utf8'));
    const json = quiesce(['convert', DOOR, '--to', 'json']);
    expect(json.code).toBe(0);
    expect(json.stdout).toBe(tableToJson(door));
    const csv = quiesce(['convert', DOOR, '--to', 'csv']);
    expect(tablesEqual(parseCsv(csv.stdout), door)).toBe(true);
    const kiss = quiesce(['convert', DOOR, '--to', 'kiss2']);
    const back = parseKiss2(kiss.stdout, { name: door.name });
    expect(back.inputs).toEqual(door.inputs);
    expect(Array.from(back.next)).toEqual(Array.from(door.next));
    const text = quiesce(['convert', file('door.json', json.stdout), '--to', 'text']);
    expect(text.stdout).toBe(tableToText(door));
  });

  it('reads standard input with --from and writes a file with -o', () => {
    const out = join(tmp, 'from-stdin.qfl');
    const r = quiesce(['convert', '-', '--from', 'kiss2', '--to', 'text', '-o', out], readFileSync(`${KISS}/lion.kiss2`, 'utf8'));
    expect(r.code).toBe(0);
    expect(r.stdout).toBe('');
    expect(readFileSync(out, 'utf8')).toContain('grid   00     01     11     10\n  st0  st0/0  st1/-  st0/0  st0/0\n');
  });
});

describe('quiesce CLI: engine commands', () => {
  it('analyze --json has the contract shape; lion has one unspecified transition, so exit 1', () => {
    // check-data README: lion has 1 single-input change reaching an unspecified cell (st3 at 00, inputs become 10)
    const r = quiesce(['analyze', `${KISS}/lion.kiss2`, '--json']);
    expect(r.code).toBe(1);
    const doc = JSON.parse(r.stdout) as { stable: [string, string][]; reachable: string[]; findings: Record<string, unknown>[] };
    expect(Object.keys(doc)).toEqual(['stable', 'reachable', 'findings']);
    expect(doc.stable).toContainEqual(['st0', '00']);
    expect(doc.reachable).toEqual(['st0', 'st1', 'st2', 'st3']);
    const gaps = doc.findings.filter((f) => f.code === 'unspecified-transition');
    expect(gaps).toEqual([expect.objectContaining({ code: 'unspecified-transition', severity: 'error', state: 'st3', inputs: '10' })]);
    for (const f of doc.findings) expect(Object.keys(f).slice(0, 3)).toEqual(['code', 'severity', 'message']);
  });

  it('analyze prints text for people by default; the gated latch has no error finding, so exit 0', () => {
    const r = quiesce(['analyze', `${KISS}/gated-latch.kiss2`]);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('gated-latch: 6 states, 2 inputs, 1 output');
    expect(r.stdout).toContain('findings: 0 errors');
  });

  it('minimize --json reduces the gated latch to 2 rows {a,c,d} {b,e,f}', () => {
    // check-data README worked example (Mano and Ciletti, Digital Design): 2 rows by merging (a, c, d) and (b, e, f)
    const r = quiesce(['minimize', `${KISS}/gated-latch.kiss2`, '--json']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.stdout) as { states: number; exact: boolean; classes: string[][]; table: unknown };
    expect(Object.keys(doc)).toEqual(['states', 'exact', 'classes', 'table']);
    expect(doc.states).toBe(2);
    expect(doc.exact).toBe(true);
    expect(doc.classes).toEqual([
      ['a', 'c', 'd'],
      ['b', 'e', 'f'],
    ]);
    expect(parseJson(JSON.stringify(doc.table)).states.length).toBe(2);
  });

  it('simulate --inputs runs from power-up; a bad vector is exit 2 with its position', () => {
    const r = quiesce(['simulate', DOOR, '--inputs', '00 01 11', '--json']);
    expect(r.code).toBe(0);
    const sim = JSON.parse(r.stdout) as { steps: { state: string; outputs: string; fault: string }[] };
    expect(sim.steps.map((s) => [s.state, s.outputs, s.fault])).toEqual([
      ['idle', '0', 'none'],
      ['armed', '0', 'none'],
      ['open', '1', 'none'],
    ]);
    const bad = quiesce(['simulate', DOOR, '--inputs', '00 0x']);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toBe('quiesce: --inputs: vector 2: "0x" is not 2 characters of 0 and 1 (hint: one character per input, in the order door_closed key)\n');
  });

  it('fill gives the gated latch\'s transient cells values', () => {
    // check-data README: of 12 single-input changes from stable cells, 8 keep Q, so those transient cells must take that value
    const r = quiesce(['fill', `${KISS}/gated-latch.kiss2`, '--json']);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.stdout) as { assignments: unknown[]; conflicts: unknown[]; table: unknown };
    expect(doc.assignments.length).toBeGreaterThanOrEqual(8);
    expect(doc.conflicts).toEqual([]);
    const text = quiesce(['fill', `${KISS}/gated-latch.kiss2`, '--to', 'text']);
    expect(text.code).toBe(0);
    expect(text.stdout).toMatch(/^flow gated-latch\n/);
    expect(text.stderr).toMatch(/^filled \d+ don't-care outputs; 0 changes still glitch\n$/);
  });
});

describe('quiesce CLI: invalid input is exit 2 with a located message and no stack trace', () => {
  it('a .qfl with errors lists each one as FILE:LINE:COL', () => {
    const bad = file('bad.qfl', readFileSync(DOOR, 'utf8').replace('open/1', 'opne/1').replace('inputs door_closed key', 'inputs door_closed door_closed'));
    const r = quiesce(['analyze', bad]);
    expect(r.code).toBe(2);
    expect(r.stdout).toBe('');
    expect(r.stderr).toBe(`${bad}:5:20: duplicate input "door_closed" (hint: first declared at 5:8)\n${bad}:15:33: unknown state "opne" (hint: did you mean "open"?)\n`);
    expectNoStack(r.stderr);
  });

  it('JSON errors carry the path and the position', () => {
    const r = quiesce(['analyze', file('bad.json', '{\n  "format": "quiesce-flow-table",\n  "version": 1,\n  "name": "x",\n  "inputs": "a"\n}\n')]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('bad.json:5:13: inputs: Expected array, received string');
    const syntax = quiesce(['convert', file('broken.json', '{"format": "quiesce-flow-table",,}'), '--to', 'text']);
    expect(syntax.stderr).toContain('broken.json:1:33: expected a quoted key');
  });

  it('binary garbage, an oversized file, a missing file', () => {
    const garbage = quiesce(['analyze', file('garbage.kiss2', Buffer.from([0x7f, 0x45, 0x4c, 0x46, 0, 0, 1, 2, 0xff, 0xfe]))]);
    expect(garbage.code).toBe(2);
    expect(garbage.stderr).toMatch(/garbage\.kiss2:1:5: the source contains a NUL byte/);
    const big = quiesce(['analyze', file('big.qfl', `flow x\n${'#'.repeat(3 * 1024 * 1024)}\n`)]);
    expect(big.code).toBe(2);
    expect(big.stderr).toMatch(/big\.qfl: the file is 3\.0 MiB; the limit is 2 MiB/);
    const missing = quiesce(['analyze', join(tmp, 'nope.qfl')]);
    expect(missing.code).toBe(2);
    expect(missing.stderr).toMatch(/nope\.qfl: no such file\n$/);
    for (const r of [garbage, big, missing]) expectNoStack(r.stderr);
  });

  it('usage errors: unknown flag, unknown command, unknown extension, missing argument, no arguments', () => {
    const cases = [
      quiesce(['analyze', DOOR, '--frobnicate']),
      quiesce(['analyse', DOOR]),
      quiesce(['analyze', file('table.txt', 'flow x\n')]),
      quiesce(['convert', DOOR]),
      quiesce(['convert', DOOR, '--to', 'yaml']),
      quiesce(['simulate', DOOR]),
      quiesce(['minimize', DOOR, '--time-budget', 'soon']),
      quiesce([]),
    ];
    for (const r of cases) {
      expect(r.code).toBe(2);
      expect(r.stderr.length).toBeGreaterThan(0);
      expectNoStack(r.stderr);
    }
    expect(cases[0]!.stderr).toContain("Unknown option '--frobnicate'");
    expect(cases[1]!.stderr).toContain('unknown command "analyse" (hint: did you mean `quiesce analyze`?)');
    expect(cases[2]!.stderr).toContain('cannot tell the format of');
    expect(cases[3]!.stderr).toContain('convert: missing --to FORMAT');
    expect(cases[4]!.stderr).toContain('--to "yaml" is not a format');
  });
});
