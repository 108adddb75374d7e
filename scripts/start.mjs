// `npm start`: build if needed, then run the built server, wait until the database is
// migrated (and seeded in demo mode), and print the URL. Ctrl-C stops it cleanly.
import { spawn } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { ensureBuilt, isAlive, outDirOf, ROOT, serverEntryOf } from './build-if-needed.mjs';

const host = process.env.HOST ?? '127.0.0.1';
const port = Number(process.env.PORT ?? 4321);
const outDir = outDirOf();
const usesEmbedded = !process.env.DATABASE_URL;
const dataDir = path.resolve(ROOT, process.env.QUIESCE_DATA_DIR ?? '.data');

// Refuse early (before a build) when another process holds the embedded database.
if (usesEmbedded) {
  try {
    const lock = JSON.parse(fs.readFileSync(path.join(dataDir, 'quiesce.lock'), 'utf8'));
    if (Number.isInteger(lock.pid) && lock.pid !== process.pid && isAlive(lock.pid)) {
      console.error(
        `[quiesce] ${dataDir} is in use by another Quiesce process (pid ${lock.pid}).\n` +
          '  Stop that process first, or set QUIESCE_DATA_DIR to another directory, or use DATABASE_URL=postgres://… .',
      );
      process.exit(1);
    }
  } catch {
    // no lock, or a stale/unreadable one: the server takes it over
  }
}

try {
  await ensureBuilt({ outDir });
} catch (error) {
  console.error(`[quiesce] the build failed: ${error.message}`);
  process.exit(1);
}

const child = spawn(process.execPath, [serverEntryOf(outDir)], {
  cwd: ROOT,
  stdio: ['ignore', 'inherit', 'inherit'],
  env: { NODE_ENV: 'production', ...process.env, HOST: host, PORT: String(port), ASTRO_TELEMETRY_DISABLED: '1' },
});
let stopping = false;
for (const signal of ['SIGINT', 'SIGTERM']) {
  process.on(signal, () => {
    stopping = true;
    child.kill(signal);
  });
}
child.on('exit', (code, signal) => {
  if (!stopping && code !== 0) {
    console.error(`[quiesce] the server stopped (${signal ?? `exit ${code}`}). Is port ${port} already in use? Set PORT to another one.`);
  }
  process.exit(code ?? 0);
});

const shown = host === '0.0.0.0' || host === '::' ? '127.0.0.1' : host;
const base = `http://${shown.includes(':') ? `[${shown}]` : shown}:${port}`;
const deadline = Date.now() + 180_000;
for (;;) {
  if (Date.now() > deadline) {
    console.error('[quiesce] the server did not become ready within 3 minutes.');
    child.kill('SIGTERM');
    break;
  }
  try {
    const res = await fetch(`${base}/api/health`);
    const body = await res.json();
    if (res.ok && body.ok) {
      console.log(`\n  Quiesce is running at ${process.env.PUBLIC_ORIGIN ?? base}  (database: ${body.backend}${body.demo ? ', demo mode' : ''})`);
      if (body.demo) console.log('  Demo sign-in: owner@demo.quiesce.test / quiesce-demo-owner (more accounts on the sign-in page)');
      console.log('  Press Ctrl-C to stop.\n');
      break;
    }
    if (res.status === 503) {
      console.error(`[quiesce] ${body?.error?.message ?? 'the database is unavailable'}`);
      child.kill('SIGTERM');
      break;
    }
  } catch {
    // not listening yet
  }
  await new Promise((r) => setTimeout(r, 300));
}
