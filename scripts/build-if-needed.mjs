// Builds the Astro app when the build is missing or older than its sources (shared by
// scripts/start.mjs, scripts/pretest.mjs and the e2e tests). One build at a time per
// output directory, guarded by a lock directory, so parallel callers wait for each other.
import { spawn } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

/** The project root (the directory above scripts/). */
export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');

const SOURCES = ['src', 'templates', 'public', 'drizzle', 'astro.config.mjs', 'package.json', 'package-lock.json', 'tsconfig.json'];
const STAMP = '.quiesce-build.json';

function newestMtime(entry) {
  let stat;
  try {
    stat = fs.statSync(entry);
  } catch {
    return 0;
  }
  if (!stat.isDirectory()) return stat.mtimeMs;
  let newest = stat.mtimeMs;
  for (const name of fs.readdirSync(entry)) newest = Math.max(newest, newestMtime(path.join(entry, name)));
  return newest;
}

/** Settings that are baked into the build (astro.config.mjs reads them). */
function buildSettings() {
  return { publicOrigin: process.env.PUBLIC_ORIGIN ?? '', allowedHosts: process.env.QUIESCE_ALLOWED_HOSTS ?? '', nodeEnv: 'production' };
}

/** Returns the absolute output directory (QUIESCE_OUT_DIR or dist/). */
export function outDirOf(outDir = process.env.QUIESCE_OUT_DIR ?? 'dist') {
  return path.resolve(ROOT, outDir);
}

/** The production server of a build (src/lib/server/serve.ts, emitted by the build). */
export function serverEntryOf(outDir = outDirOf()) {
  return path.join(outDir, 'server', 'serve.mjs');
}

/** Why a build is needed, or null when the existing one is current. */
export function whyBuild(outDir = outDirOf()) {
  const entry = serverEntryOf(outDir);
  const stampPath = path.join(outDir, STAMP);
  if (!fs.existsSync(entry) || !fs.existsSync(stampPath)) return 'no build yet';
  let stamp;
  try {
    stamp = JSON.parse(fs.readFileSync(stampPath, 'utf8'));
  } catch {
    return 'unreadable build stamp';
  }
  const settings = buildSettings();
  if (stamp.publicOrigin !== settings.publicOrigin || stamp.allowedHosts !== settings.allowedHosts) {
    return 'PUBLIC_ORIGIN or QUIESCE_ALLOWED_HOSTS changed';
  }
  if (stamp.nodeEnv !== settings.nodeEnv) return 'the previous build was not a production build';
  const newest = Math.max(...SOURCES.map((s) => newestMtime(path.join(ROOT, s))));
  if (newest > stamp.sourcesMtime) return 'sources changed since the last build';
  return null;
}

function run(command, args, env) {
  return new Promise((resolve, reject) => {
    const child = spawn(command, args, { cwd: ROOT, stdio: 'inherit', env });
    child.on('error', reject);
    child.on('exit', (code, signal) =>
      code === 0 ? resolve() : reject(new Error(`${command} ${args.join(' ')} failed (${signal ?? `exit ${code}`})`)),
    );
  });
}

/** Whether a process with this id exists (EPERM: it does, but belongs to another user). */
export function isAlive(pid) {
  try {
    process.kill(pid, 0);
    return true;
  } catch (error) {
    return error.code === 'EPERM';
  }
}

async function withBuildLock(outDir, fn) {
  const lock = `${outDir}.build-lock`;
  for (;;) {
    try {
      fs.mkdirSync(lock);
      fs.writeFileSync(path.join(lock, 'pid'), String(process.pid));
      break;
    } catch (error) {
      if (error.code !== 'EEXIST') throw error;
      const pid = Number(fs.readFileSync(path.join(lock, 'pid'), { encoding: 'utf8', flag: 'a+' }) || 0);
      if (pid && !isAlive(pid)) {
        fs.rmSync(lock, { recursive: true, force: true });
        continue;
      }
      await new Promise((r) => setTimeout(r, 500));
    }
  }
  try {
    return await fn();
  } finally {
    fs.rmSync(lock, { recursive: true, force: true });
  }
}

/** Builds into outDir unless the build there is current; returns true when it built. */
export async function ensureBuilt({ outDir = outDirOf(), log = console.log } = {}) {
  if (!whyBuild(outDir)) return false;
  return withBuildLock(outDir, async () => {
    const reason = whyBuild(outDir); // another process may have built while we waited
    if (!reason) return false;
    log(`[quiesce] building the app into ${path.relative(ROOT, outDir) || '.'} (${reason}) …`);
    const sourcesMtime = Math.max(...SOURCES.map((s) => newestMtime(path.join(ROOT, s))));
    const astro = path.join(ROOT, 'node_modules', 'astro', 'astro.js');
    await run(process.execPath, [astro, 'build'], {
      ...process.env,
      QUIESCE_OUT_DIR: outDir,
      ASTRO_TELEMETRY_DISABLED: '1',
      // vitest sets NODE_ENV=test, which Vite would keep, bundling React's development build.
      NODE_ENV: 'production',
    });
    fs.writeFileSync(path.join(outDir, STAMP), JSON.stringify({ ...buildSettings(), sourcesMtime, builtAt: new Date().toISOString() }));
    return true;
  });
}
