/**
 * Runs the BUILT app for e2e tests: builds once (skipped when current, see
 * scripts/build-if-needed.mjs), starts the production server `dist/server/serve.mjs` on a free loopback
 * port with a fresh data directory, waits until /api/health answers, and stops it.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { ensureBuilt, outDirOf, ROOT, serverEntryOf } from '../../../scripts/build-if-needed.mjs';

/** A running test server. */
export type TestServer = {
  /** Base URL, e.g. http://127.0.0.1:43117 */
  url: string;
  port: number;
  dataDir: string;
  /** Everything the server printed so far (for failure messages). */
  output: () => string;
  /** Stops the server (SIGTERM, then SIGKILL) and removes its data directory unless kept. */
  stop: (options?: { keepData?: boolean }) => Promise<void>;
};

/** Options of startServer(). */
export type StartOptions = {
  /** Extra environment (e.g. QUIESCE_DEMO: '0', DATABASE_URL). */
  env?: Record<string, string | undefined>;
  /** Reuse a data directory (e.g. to test a restart); default: a fresh temporary one. */
  dataDir?: string;
  /** Output directory of the build (default QUIESCE_OUT_DIR or dist). */
  outDir?: string;
};

/** Returns a free TCP port on 127.0.0.1. */
export function findFreePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = net.createServer();
    srv.unref();
    srv.on('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const { port } = srv.address() as net.AddressInfo;
      srv.close(() => resolve(port));
    });
  });
}

/** Builds the app if needed and returns the output directory. */
export async function buildApp(outDir = outDirOf()): Promise<string> {
  await ensureBuilt({ outDir, log: () => undefined });
  return outDir;
}

function waitExit(child: ChildProcess, ms: number): Promise<boolean> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve(true);
  return new Promise((resolve) => {
    const timer = setTimeout(() => resolve(false), ms);
    child.once('exit', () => {
      clearTimeout(timer);
      resolve(true);
    });
  });
}

/** Starts the built server on a free loopback port and waits until it is ready. */
export async function startServer(options: StartOptions = {}): Promise<TestServer> {
  const outDir = await buildApp(options.outDir ?? outDirOf());
  const port = await findFreePort();
  const dataDir = options.dataDir ?? fs.mkdtempSync(path.join(os.tmpdir(), 'quiesce-e2e-'));
  const env: Record<string, string> = {};
  for (const [k, v] of Object.entries({ ...process.env, HOST: '127.0.0.1', PORT: String(port), QUIESCE_DATA_DIR: dataDir, QUIESCE_DEMO: '1', ASTRO_TELEMETRY_DISABLED: '1', NODE_ENV: 'production', SMTP_URL: undefined, DATABASE_URL: undefined, ...options.env })) {
    if (v !== undefined) env[k] = v;
  }
  const child = spawn(process.execPath, [serverEntryOf(outDir)], { cwd: ROOT, env, stdio: ['ignore', 'pipe', 'pipe'] });
  let output = '';
  child.stdout?.on('data', (d: Buffer) => (output += d.toString()));
  child.stderr?.on('data', (d: Buffer) => (output += d.toString()));
  const url = `http://127.0.0.1:${port}`;
  const stop = async (stopOptions: { keepData?: boolean } = {}) => {
    if (child.exitCode === null && child.signalCode === null) {
      child.kill('SIGTERM');
      if (!(await waitExit(child, 10_000))) {
        child.kill('SIGKILL');
        await waitExit(child, 5_000);
      }
    }
    if (!stopOptions.keepData && !options.dataDir) fs.rmSync(dataDir, { recursive: true, force: true });
  };
  const deadline = Date.now() + 180_000;
  for (;;) {
    if (child.exitCode !== null) throw new Error(`the server exited early (code ${child.exitCode}):\n${output}`);
    if (Date.now() > deadline) {
      await stop();
      throw new Error(`the server did not become ready:\n${output}`);
    }
    try {
      const res = await fetch(`${url}/api/health`);
      if (res.ok) break;
    } catch {
      // not listening yet
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  return { url, port, dataDir, output: () => output, stop };
}
