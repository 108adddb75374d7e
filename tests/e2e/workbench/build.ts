/**
 * Builds the app once for the workbench e2e tests (into dist-workbench unless QUIESCE_E2E_OUT
 * names another folder inside the repository) and reuses the build while nothing under src/,
 * astro.config.mjs or package.json is newer than it.
 */
import { execFileSync } from 'node:child_process';
import { existsSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';

const root = resolve(import.meta.dirname, '../../..');

function newestMtime(path: string): number {
  const st = statSync(path);
  if (!st.isDirectory()) return st.mtimeMs;
  let m = st.mtimeMs;
  for (const name of readdirSync(path)) m = Math.max(m, newestMtime(join(path, name)));
  return m;
}

let built: Promise<string> | null = null;

/** The absolute path of a current build (building first when needed). */
export function ensureBuilt(): Promise<string> {
  built ??= (async () => {
    const out = resolve(root, process.env.QUIESCE_E2E_OUT ?? 'dist-workbench');
    const stamp = join(out, '.built-at');
    const inputs = Math.max(newestMtime(join(root, 'src')), newestMtime(join(root, 'templates')), statSync(join(root, 'astro.config.mjs')).mtimeMs, statSync(join(root, 'package.json')).mtimeMs);
    if (!existsSync(join(out, 'server', 'entry.mjs')) || !existsSync(stamp) || statSync(stamp).mtimeMs < inputs) {
      execFileSync(process.execPath, [join(root, 'node_modules', 'astro', 'astro.js'), 'build'], {
        cwd: root,
        env: { ...process.env, QUIESCE_OUT_DIR: out },
        stdio: ['ignore', 'ignore', 'inherit'],
        timeout: 15 * 60_000,
      });
      writeFileSync(stamp, new Date().toISOString());
    }
    return out;
  })();
  return built;
}
