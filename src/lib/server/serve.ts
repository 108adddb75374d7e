/**
 * The production server, built to dist/server/serve.mjs (see lib/build/server-entry.ts): the
 * node adapter's handler (static files, then the app) behind a plain node HTTP server, with the
 * cached-download fast path (download-fast-path.ts) in front of it. `npm start`, the e2e tests
 * and the benchmarks all run this file; dist/server/entry.mjs alone still runs the app, without
 * the fast path.
 */
import fs from 'node:fs';
import http from 'node:http';
import https from 'node:https';
import { getDb } from './db';
import { createDownloadFastPath } from './download-fast-path';

type NodeHandler = (req: http.IncomingMessage, res: http.ServerResponse) => void;
type AdapterEntry = { handler: NodeHandler; options: { host?: string | boolean; port?: number } };

// A variable, so the bundler leaves this runtime import of the adapter's entry alone.
const ENTRY = './entry.mjs';

/** Starts the server on HOST/PORT (else the adapter's configured host and port). */
async function startServer(): Promise<void> {
  process.env.ASTRO_NODE_AUTOSTART = 'disabled'; // this file listens, not the adapter
  const { handler, options } = (await import(/* @vite-ignore */ new URL(ENTRY, import.meta.url).href)) as AdapterEntry;
  const configured = typeof options.host === 'boolean' ? (options.host ? '0.0.0.0' : 'localhost') : options.host;
  const host = process.env.HOST ?? configured ?? '127.0.0.1';
  const port = process.env.PORT ? Number(process.env.PORT) : (options.port ?? 4321);
  const fastPath = createDownloadFastPath(getDb);
  const listener = (req: http.IncomingMessage, res: http.ServerResponse) => {
    try {
      if (fastPath(req, res)) return;
    } catch (error) {
      console.error('[quiesce] the download fast path failed; the app answers instead:', error);
      if (res.headersSent) return void res.destroy();
    }
    handler(req, res);
  };
  // Like the node adapter's own server: TLS when both files are given (usually a proxy terminates it).
  const cert = process.env.SERVER_CERT_PATH;
  const key = process.env.SERVER_KEY_PATH;
  const server = cert && key ? https.createServer({ cert: fs.readFileSync(cert), key: fs.readFileSync(key) }, listener) : http.createServer(listener);
  server.on('error', (error) => {
    console.error(`[quiesce] the server could not listen on ${host}:${port}: ${error.message}`);
    process.exit(1);
  });
  server.listen(port, host, () => {
    const shown = host.includes(':') ? `[${host}]` : host;
    console.log(`[quiesce] listening on ${cert && key ? 'https' : 'http'}://${shown}:${port}`);
  });
}

startServer().catch((error: unknown) => {
  console.error('[quiesce] the server failed to start:', error);
  process.exit(1);
});
