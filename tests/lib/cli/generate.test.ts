/** `quiesce generate`: files or zip, the same bytes as the library call, and located errors for bad input. */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { main } from '../../../src/lib/cli/main';
import type { CliIo } from '../../../src/lib/cli/io';
import { generateBundle } from '../../../src/lib/codegen/bundle';
import { interchangeToTable } from '../../../src/lib/engine/model';

const fixture = new URL('../../fixtures/demo/oven-door-interlock.json', import.meta.url).pathname;
const work = mkdtempSync(join(tmpdir(), 'quiesce-cli-generate-'));
afterAll(() => rmSync(work, { recursive: true, force: true }));

async function cli(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const io: CliIo = { stdout: (s) => void (out += s), stderr: (s) => void (err += s), readStdin: async () => Buffer.alloc(0) };
  const code = await main(args, io);
  return { code, out, err };
}

describe('quiesce generate', () => {
  it('--zip writes the same bytes as generateBundle', async () => {
    const zip = join(work, 'oven.zip');
    const r = await cli(['generate', fixture, '--target', 'rust', '--zip', zip, '--revision', 'r5']);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    const table = interchangeToTable(JSON.parse(readFileSync(fixture, 'utf8')));
    const expected = await generateBundle(table, { target: 'rust', revision: 'r5' });
    expect(Buffer.from(readFileSync(zip)).equals(Buffer.from(expected.zip))).toBe(true);
    expect(r.out).toContain(expected.sha256);
  });

  it('--out writes every file of the bundle', async () => {
    const dir = join(work, 'c');
    const r = await cli(['generate', fixture, '--target', 'c', '--out', dir, '--prefix', 'kiln']);
    expect(r.code).toBe(0);
    const manifest = JSON.parse(readFileSync(join(dir, 'manifest.json'), 'utf8'));
    expect(manifest.options.prefix).toBe('kiln');
    for (const f of manifest.files as { path: string; bytes: number }[]) expect(readFileSync(join(dir, f.path)).length).toBe(f.bytes);
  });

  it('usage problems exit 2 with one clear line', async () => {
    for (const [args, message] of [
      [['generate', fixture, '--zip', 'x.zip'], /missing --target/],
      [['generate', fixture, '--target', 'ada', '--zip', 'x.zip'], /"ada" is not a target/],
      [['generate', fixture, '--target', 'c'], /exactly one of --out DIR and --zip FILE/],
      [['generate', fixture, '--target', 'c', '--out', 'a', '--zip', 'b'], /exactly one of/],
      [['generate', fixture, '--target', 'c', '--zip', 'x.zip', '--prefix', '9lives'], /--prefix: a prefix is/],
    ] as const) {
      const r = await cli([...args]);
      expect(r.code).toBe(2);
      expect(r.err).toMatch(message);
      expect(r.err).not.toMatch(/\n\s+at /);
    }
  });

  it('a table the generator cannot take is a located error, not a stack trace', async () => {
    const src = join(work, 'bad.json');
    const doc = JSON.parse(readFileSync(fixture, 'utf8'));
    doc.scenarios = [{ name: 'short vector', inputs: ['000', '01'] }];
    writeFileSync(src, JSON.stringify(doc));
    const r = await cli(['generate', src, '--target', 'c', '--zip', join(work, 'bad.zip')]);
    expect(r.code).toBe(2);
    expect(r.err).toContain('scenarios[0].inputs[1]');
    expect(r.err).not.toMatch(/\n\s+at /);
  });
});
