/**
 * Download benchmark: the built production server (dist/server/serve.mjs) on loopback, 100 concurrent clients for a bounded time
 * (autocannon), fetching a cached bundle with the demo CI key, next to the same server serving a
 * static file of the same size from its client directory. The ratio of the two throughputs is
 * the figure (target <= 2, and no errors). The first download of a new revision, which
 * generates and stores the bundle, is reported separately, and so is the cached download through
 * the app alone (the adapter's entry.mjs, without the server's fast path).
 *
 * The server runs from a temporary copy of the build (with node_modules linked in), so the
 * static file is never written into the repository's build. Set QUIESCE_BENCH_SECONDS to
 * change the 10 s per measurement.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import autocannon from 'autocannon';
import { ensureBuilt, outDirOf, ROOT, serverEntryOf } from '../scripts/build-if-needed.mjs';
import { openDatabase } from '../src/lib/server/db';
import { DEMO_CI_KEY, DEMO_WORKSPACE } from '../src/lib/server/demo/accounts';
import { seedDemo } from '../src/lib/server/demo/seed';
import { createRevision, getHeadRevision } from '../src/lib/server/revisions';
import { controllers } from '../src/lib/server/schema';
import type { BenchRow } from './types';
import { median } from './types';

const SECONDS = Number(process.env.QUIESCE_BENCH_SECONDS ?? 10);
const ROUNDS = 2;
const CONNECTIONS = 100;
const NEW_REVISIONS = 5;
const CONTROLLER = 'door-interlock';

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = net.createServer();
    srv.on('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const { port } = srv.address() as net.AddressInfo;
      srv.close(() => resolve(port));
    });
  });
}

async function prepareData(dataDir: string): Promise<void> {
  const handle = await openDatabase({ dataDir, afterMigrate: async (db, { wasEmpty }) => (wasEmpty ? seedDemo(db) : undefined) });
  try {
    const door = (await handle.db.select().from(controllers)).find((x) => x.slug === CONTROLLER);
    if (!door) throw new Error('the demo seed has no controllers');
    for (let i = 0; i < NEW_REVISIONS; i++) {
      const head = (await getHeadRevision(handle.db, door.id))!;
      const source = head.source.replace(/^about .*$/m, `about "Benchmark variant ${i + 1}: same table, new description."`);
      await createRevision(handle.db, { controllerId: door.id, baseNumber: head.number, source, message: `bench variant ${i + 1}`, author: null });
    }
  } finally {
    await handle.close();
  }
}

/** Starts a server file of the build on a free loopback port and waits for /api/health. */
async function startServer(file: string, dataDir: string): Promise<{ child: ChildProcess; origin: string; bundleUrl: string }> {
  const port = await freePort();
  const env: Record<string, string> = {};
  for (const [k, v] of Object.entries({ ...process.env, HOST: '127.0.0.1', PORT: String(port), QUIESCE_DATA_DIR: dataDir, QUIESCE_DEMO: '1', ASTRO_TELEMETRY_DISABLED: '1' })) {
    if (v !== undefined && k !== 'DATABASE_URL' && k !== 'SMTP_URL') env[k] = v;
  }
  const child = spawn(process.execPath, [file], { cwd: ROOT, env, stdio: ['ignore', 'ignore', 'pipe'] });
  let stderr = '';
  child.stderr?.on('data', (d: Buffer) => (stderr += d.toString()));
  const origin = `http://127.0.0.1:${port}`;
  const deadline = Date.now() + 60_000;
  for (;;) {
    if (child.exitCode !== null) throw new Error(`server exited: ${stderr}`);
    if (Date.now() > deadline) throw new Error(`server not ready: ${stderr}`);
    const ok = await fetch(`${origin}/api/health`).then((r) => r.ok).catch(() => false);
    if (ok) break;
    await new Promise((r) => setTimeout(r, 200));
  }
  return { child, origin, bundleUrl: `${origin}/api/v1/workspaces/${DEMO_WORKSPACE.slug}/controllers/${CONTROLLER}/revisions/1/bundle?target=c` };
}

/** Stops a server (SIGTERM, then SIGKILL) and waits until it has exited. */
async function stopServer(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return;
  const exited = new Promise((r) => child.once('exit', r));
  child.kill('SIGTERM');
  const timer = setTimeout(() => child.kill('SIGKILL'), 5000);
  await exited;
  clearTimeout(timer);
}

async function measure(url: string, headers: Record<string, string>): Promise<{ rps: number; p99: number; p50: number; errors: number; non2xx: number; total: number }> {
  const result = await autocannon({ url, connections: CONNECTIONS, duration: SECONDS, headers });
  return {
    rps: result.requests.average,
    p99: result.latency.p99,
    p50: result.latency.p50,
    errors: result.errors + result.timeouts,
    non2xx: result.non2xx,
    total: result.requests.total,
  };
}

/** Sums rounds: throughput over all of them, the worst p99 and p50, all errors. */
function combine(runs: Awaited<ReturnType<typeof measure>>[]): Awaited<ReturnType<typeof measure>> {
  const total = runs.reduce((a, r) => a + r.total, 0);
  return {
    rps: runs.reduce((a, r) => a + r.rps, 0) / runs.length,
    p99: Math.max(...runs.map((r) => r.p99)),
    p50: Math.max(...runs.map((r) => r.p50)),
    errors: runs.reduce((a, r) => a + r.errors, 0),
    non2xx: runs.reduce((a, r) => a + r.non2xx, 0),
    total,
  };
}

/** Runs the download benchmark and returns its rows. */
export async function run(): Promise<BenchRow[]> {
  const outDir = outDirOf();
  await ensureBuilt({ outDir, log: (m: string) => process.stderr.write(`${m}\n`) });
  const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'quiesce-bench-download-'));
  let child: ChildProcess | null = null;
  try {
    fs.cpSync(path.join(outDir, 'server'), path.join(tmp, 'build', 'server'), { recursive: true });
    fs.cpSync(path.join(outDir, 'client'), path.join(tmp, 'build', 'client'), { recursive: true });
    fs.symlinkSync(path.join(ROOT, 'node_modules'), path.join(tmp, 'build', 'node_modules'), 'dir');
    const dataDir = path.join(tmp, 'data');
    await prepareData(dataDir);

    let server = await startServer(serverEntryOf(path.join(tmp, 'build')), dataDir);
    child = server.child;
    const origin = server.origin;
    const auth = { Authorization: `Bearer ${DEMO_CI_KEY.value}` };
    const bundleUrl = (rev: string | number) => `${origin}/api/v1/workspaces/${DEMO_WORKSPACE.slug}/controllers/${CONTROLLER}/revisions/${rev}/bundle?target=c`;

    // First downloads: each new revision's bundle is generated, stored and served.
    const firstMs: number[] = [];
    for (let r = 2; r <= NEW_REVISIONS + 1; r++) {
      const t0 = performance.now();
      const res = await fetch(bundleUrl(r), { headers: auth });
      await res.arrayBuffer();
      firstMs.push(performance.now() - t0);
      if (res.status !== 200) throw new Error(`first download of r${r} answered ${res.status}`);
    }
    // A warm (cached) download, and a static file of the same size next to it.
    const warm = await fetch(bundleUrl(1), { headers: auth });
    const bytes = new Uint8Array(await warm.arrayBuffer());
    if (warm.status !== 200) throw new Error(`download answered ${warm.status}`);
    const againMs: number[] = [];
    for (let i = 0; i < 5; i++) {
      const t0 = performance.now();
      await (await fetch(bundleUrl(2), { headers: auth })).arrayBuffer();
      againMs.push(performance.now() - t0);
    }
    fs.writeFileSync(path.join(tmp, 'build', 'client', 'bench-static.zip'), bytes);
    const staticUrl = `${origin}/bench-static.zip`;
    const check = await fetch(staticUrl);
    if (check.status !== 200 || (await check.arrayBuffer()).byteLength !== bytes.byteLength) throw new Error('the static file is not served');

    // Alternate the two a few times so a change in machine load affects both alike.
    const bundleRuns: Awaited<ReturnType<typeof measure>>[] = [];
    const staticRuns: Awaited<ReturnType<typeof measure>>[] = [];
    for (let i = 0; i < ROUNDS; i++) {
      bundleRuns.push(await measure(bundleUrl(1), auth));
      staticRuns.push(await measure(staticUrl, {}));
    }
    const bundle = combine(bundleRuns);
    const stat = combine(staticRuns);
    // Reference: the cheapest server-rendered answer (the health endpoint, through the same
    // middleware), to tell the framework's per-request cost from the download code's.
    const floor = await measure(`${origin}/api/health`, {});
    // Reference: the same download answered by the app alone (the adapter's own server, without
    // the fast path of lib/server/serve.ts), to show what the fast path buys.
    await stopServer(child);
    server = await startServer(path.join(tmp, 'build', 'server', 'entry.mjs'), dataDir);
    child = server.child;
    await (await fetch(server.bundleUrl, { headers: auth })).arrayBuffer();
    const appOnly = await measure(server.bundleUrl, auth);
    const ratio = stat.rps / Math.max(bundle.rps, 1e-9);
    const failures = bundle.errors + bundle.non2xx;
    const kib = (bytes.byteLength / 1024).toFixed(1);
    return [
      { group: 'download', case: `cached bundle (${kib} KiB), ${CONNECTIONS} clients, ${ROUNDS} × ${SECONDS} s`, value: `${bundle.rps.toFixed(0)} req/s, p50 ${bundle.p50} ms, p99 ${bundle.p99} ms (${bundle.total} requests)` },
      { group: 'download', case: `static file of the same size, ${CONNECTIONS} clients, ${ROUNDS} × ${SECONDS} s`, value: `${stat.rps.toFixed(0)} req/s, p50 ${stat.p50} ms, p99 ${stat.p99} ms (${stat.total} requests)` },
      { group: 'download', case: 'throughput ratio static / bundle', value: ratio.toFixed(2), target: '<= 2', ok: ratio <= 2 },
      { group: 'download', case: 'reference: health endpoint (no work), same clients', value: `${floor.rps.toFixed(0)} req/s, p99 ${floor.p99} ms; ratio static / health ${(stat.rps / Math.max(floor.rps, 1e-9)).toFixed(2)}` },
      { group: 'download', case: 'reference: the same cached bundle through the app alone (no fast path)', value: `${appOnly.rps.toFixed(0)} req/s, p99 ${appOnly.p99} ms; ratio static / app ${(stat.rps / Math.max(appOnly.rps, 1e-9)).toFixed(2)}` },
      { group: 'download', case: 'p99 latency ratio bundle / static', value: (bundle.p99 / Math.max(stat.p99, 1)).toFixed(2) },
      { group: 'download', case: 'errors and non-2xx answers (bundle)', value: String(failures), target: '0', ok: failures === 0 },
      { group: 'download', case: `first download of a new revision (generates the C bundle), median of ${firstMs.length}`, value: `${median(firstMs).toFixed(1)} ms (max ${Math.max(...firstMs).toFixed(1)} ms)` },
      { group: 'download', case: 'the same revision downloaded again (stored bytes), median of 5', value: `${median(againMs).toFixed(1)} ms` },
    ];
  } finally {
    if (child) await stopServer(child);
    fs.rmSync(tmp, { recursive: true, force: true });
  }
}
