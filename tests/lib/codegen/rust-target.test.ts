/**
 * The Rust target end to end. Every crate (demo tables under every double-change policy, every
 * KISS2 benchmark of the check data (MCNC / LGSynth'91 benchmark set, see check-data/README.md),
 * random tables, hostile names) becomes a member of one temporary Cargo workspace, so one
 * `cargo test`, one `cargo clippy -D warnings` and one `cargo fmt --check` cover them all on the
 * machine's two cores. Then each crate's own test binary runs, and random walks through its
 * replay example are held line by line against the engine's simulation. One demo crate is also
 * checked standalone, with exactly the commands of the issue.
 */
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DOUBLE_CHANGE_POLICIES, type FlowTable } from '../../../src/lib/engine/model';
import { generateBundle } from '../../../src/lib/codegen/bundle';
import { cloneWithPolicy, engineReplayLines, hostileTable, wideTable, loadDemoTables, loadKiss2Tables, randomWalk, run, sampleRandomTables, writeFiles, type RunResult } from './support';

const work = mkdtempSync(join(tmpdir(), 'quiesce-codegen-rust-'));
// a fresh target folder shared by every crate of the run (stale example builds would confuse the replay lookup)
const target = join(work, 'target');
const cargoEnv = { ...process.env, CARGO_TARGET_DIR: target, CARGO_TERM_COLOR: 'never' };
// the standalone crate builds apart, so nothing it links can stand in for a workspace crate's binary
const standaloneEnv = { ...cargoEnv, CARGO_TARGET_DIR: join(work, 'standalone-target') };
afterAll(() => rmSync(work, { recursive: true, force: true }));

interface Crate {
  id: string;
  table: FlowTable;
  prefix?: string;
  dir: string;
  name: string;
}

const demos = loadDemoTables();
const specs: Omit<Crate, 'dir' | 'name'>[] = [
  ...demos.flatMap(({ file, table }) =>
    DOUBLE_CHANGE_POLICIES.map((p) => ({ id: `demo ${file} ${p}`, table: cloneWithPolicy(table, p), prefix: `${table.settings.prefix ?? 'demo'}_${p}` })),
  ),
  ...loadKiss2Tables().map(({ file, table }) => ({ id: `kiss2 ${file}`, table })),
  ...sampleRandomTables(6, 4242).map((table, i) => ({ id: `random ${i + 1}`, table, prefix: `random_${i + 1}` })),
  { id: 'hostile names', table: hostileTable() },
  { id: '300 states (16-bit codes), no outputs', table: wideTable() },
];
const crates: Crate[] = specs.map((s, i) => ({ ...s, dir: join(work, 'ws', `c${i}`), name: '' }));

let testBuild: RunResult;
let clippy: RunResult;
let fmt: RunResult;
/** Test binary and replay binary of each crate, by crate folder. */
const testBinaries = new Map<string, string>();
const replayBinaries = new Map<string, string>();

beforeAll(async () => {
  for (const c of crates) {
    const bundle = await generateBundle(c.table, { target: 'rust', revision: 'r4', ...(c.prefix ? { prefix: c.prefix } : {}) });
    c.name = bundle.manifest.identifiers.crate;
    writeFiles(c.dir, bundle.files);
  }
  // In one workspace every crate's example would be `examples/replay`, one uplifted file that the
  // last link wins; each workspace copy names its example apart (the standalone test below builds
  // the crate exactly as generated).
  for (const [i, c] of crates.entries()) {
    const manifest = join(c.dir, 'Cargo.toml');
    const text = readFileSync(manifest, 'utf8').replace('[package]\n', '[package]\nautoexamples = false\n');
    writeFileSync(manifest, `${text}\n[[example]]\nname = "replay_${i}"\npath = "examples/replay.rs"\n`);
  }
  writeFileSync(join(work, 'ws', 'Cargo.toml'), `[workspace]\nresolver = "2"\nmembers = [${crates.map((c) => JSON.stringify(c.dir.split('/').pop())).join(', ')}]\n`);
  const ws = join(work, 'ws');
  // default targets: the lib's unit tests, and the examples built as ordinary programs
  testBuild = await run('cargo', ['test', '--offline', '--workspace', '--no-run', '--message-format=json'], { cwd: ws, env: cargoEnv });
  for (const line of testBuild.stdout.split('\n')) {
    if (!line.startsWith('{')) continue;
    const msg = JSON.parse(line) as { reason?: string; executable?: string | null; profile?: { test?: boolean }; target?: { kind?: string[] }; manifest_path?: string };
    if (msg.reason === 'compiler-artifact' && msg.executable && msg.profile?.test && msg.target?.kind?.includes('lib'))
      testBinaries.set(msg.manifest_path!.replace(/\/Cargo\.toml$/, ''), msg.executable);
  }
  for (const [i, c] of crates.entries()) replayBinaries.set(c.dir, join(target, 'debug', 'examples', `replay_${i}`));
  clippy = await run('cargo', ['clippy', '--offline', '--workspace', '--all-targets', '--', '-D', 'warnings'], { cwd: ws, env: cargoEnv });
  fmt = await run('cargo', ['fmt', '--all', '--check'], { cwd: ws, env: cargoEnv });
}, 600_000);

describe('Rust crates', () => {
  it('all build (tests and examples) without a warning', () => {
    expect(testBuild.code, testBuild.stderr.slice(-4000)).toBe(0);
    expect(testBuild.stderr).not.toMatch(/^warning: (?!output filename collision)/m);
  });

  it('pass cargo clippy --all-targets -- -D warnings', () => {
    expect(clippy.code, clippy.stderr.slice(-4000)).toBe(0);
  });

  it('pass cargo fmt --check', () => {
    expect(fmt.code, fmt.stdout.slice(0, 4000)).toBe(0);
  });

  describe.concurrent('pass their own tests and replay like the engine', () => {
    crates.forEach((c, index) => {
      it(c.id, async () => {
        const bin = testBinaries.get(c.dir);
        expect(bin, `${c.id}: no test binary`).toBeDefined();
        const res = await run(bin!, ['--test-threads=1'], { cwd: c.dir });
        expect(res.code, res.stdout.slice(-3000)).toBe(0);
        expect(res.stdout).toMatch(/test result: ok\. [1-9]\d* passed; 0 failed/);
        const replay = replayBinaries.get(c.dir);
        expect(replay !== undefined && existsSync(replay), `${c.id}: no replay binary`).toBe(true);
        for (let w = 0; w < 3; w++) {
          const walk = randomWalk(c.table, 1000 * index + w, 120);
          const out = await run(replay!, [], { input: `${walk.join('\n')}\n` });
          expect(out.code, out.stderr).toBe(0);
          expect(out.stdout.trimEnd().split('\n')).toEqual(engineReplayLines(c.table, walk));
        }
      });
    });
  });

  it('a demo crate passes the issue\'s commands standalone (test, clippy, fmt, run --example replay)', async () => {
    const { table } = demos[0]!;
    const bundle = await generateBundle(table, { target: 'rust', revision: 'r4' });
    const dir = join(work, 'standalone');
    writeFiles(dir, bundle.files);
    const test = await run('cargo', ['test', '--offline'], { cwd: dir, env: standaloneEnv });
    expect(test.code, test.stderr.slice(-3000)).toBe(0);
    expect(test.stdout).toMatch(/test result: ok\. [1-9]\d* passed; 0 failed/);
    const lint = await run('cargo', ['clippy', '--offline', '--all-targets', '--', '-D', 'warnings'], { cwd: dir, env: standaloneEnv });
    expect(lint.code, lint.stderr.slice(-3000)).toBe(0);
    const format = await run('cargo', ['fmt', '--check'], { cwd: dir, env: standaloneEnv });
    expect(format.code, format.stdout).toBe(0);
    const walk = randomWalk(table, 7, 60);
    const replay = await run('cargo', ['run', '--offline', '--quiet', '--example', 'replay'], { cwd: dir, env: standaloneEnv, input: `${walk.join('\n')}\n` });
    expect(replay.code, replay.stderr).toBe(0);
    expect(replay.stdout.trimEnd().split('\n')).toEqual(engineReplayLines(table, walk));
  });
});
