// @ts-check
import { defineConfig } from 'astro/config';
import node from '@astrojs/node';
import react from '@astrojs/react';
import tailwindcss from '@tailwindcss/vite';
import path from 'node:path';
import { emitServerEntry } from './src/lib/build/server-entry.ts';
import { stripMonacoCdn } from './src/lib/build/strip-cdn.ts';
import { fileURLToPath } from 'node:url';

/**
 * Host patterns Astro trusts for the Host / X-Forwarded-Host headers.
 * Astro 5.18 replaces an unlisted Host with "localhost", after which the
 * origin check rejects every same-origin form POST made through another name,
 * so the public origin (and loopback) must be listed here. The list is baked
 * into the build; scripts/start.mjs rebuilds when PUBLIC_ORIGIN changes.
 */
function readAllowedDomains() {
  /** @type {{hostname: string, port?: string}[]} */
  const patterns = [{ hostname: 'localhost' }, { hostname: '127.0.0.1' }, { hostname: '[::1]' }];
  const extra = [process.env.PUBLIC_ORIGIN, ...(process.env.QUIESCE_ALLOWED_HOSTS ?? '').split(',')]
    .map((s) => (s ?? '').trim())
    .filter(Boolean);
  for (const entry of extra) {
    try {
      const url = new URL(entry.includes('://') ? entry : `http://${entry}`);
      // Hostname only: the port and protocol seen by the app differ from the
      // public ones behind a proxy, and Astro matches any port when none is given.
      if (!patterns.some((p) => p.hostname === url.hostname)) patterns.push({ hostname: url.hostname });
    } catch {
      throw new Error(`PUBLIC_ORIGIN / QUIESCE_ALLOWED_HOSTS entry is not a URL or host name: ${entry}`);
    }
  }
  return patterns;
}

const dataDir = path.resolve(process.env.QUIESCE_DATA_DIR ?? '.data');

export default defineConfig({
  output: 'server',
  adapter: node({ mode: 'standalone' }),
  outDir: process.env.QUIESCE_OUT_DIR ?? './dist',
  integrations: [react()],
  server: { host: process.env.HOST ?? '127.0.0.1', port: Number(process.env.PORT ?? 4321) },
  security: {
    checkOrigin: true,
    allowedDomains: readAllowedDomains(),
  },
  devToolbar: { enabled: false },
  vite: {
    plugins: [tailwindcss(), stripMonacoCdn(), emitServerEntry(path.dirname(fileURLToPath(import.meta.url)))],
    server: {
      watch: {
        ignored: [`${dataDir}/**`, '**/.data/**', '**/.data-*/**', '**/test-output/**', '**/dist/**', '**/dist-*/**', '**/target/**'],
      },
    },
    ssr: {
      // Native and wasm-loading packages must stay real node_modules imports.
      external: ['@electric-sql/pglite', '@node-rs/argon2', 'pg', 'pg-native', 'smtp-server', 'nodemailer'],
    },
    optimizeDeps: {
      exclude: ['@electric-sql/pglite', '@node-rs/argon2'],
    },
  },
});
