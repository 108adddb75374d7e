/**
 * Vite plugin: adds lib/server/serve.ts to the server build as dist/server/serve.mjs. As a
 * chunk of the same build it shares every module (database, caches) with the app's routes,
 * instead of loading a second copy of them.
 */
import path from 'node:path';
import type { Plugin } from 'vite';

/** The file name of the production server inside the build's server directory. */
export const SERVER_ENTRY_FILE = 'serve.mjs';

/** Emits the production server entry in the SSR build (and nowhere else). */
export function emitServerEntry(root: string): Plugin {
  let ssr = false;
  return {
    name: 'quiesce-server-entry',
    apply: 'build',
    configResolved(config) {
      ssr = Boolean(config.build.ssr);
    },
    buildStart() {
      if (ssr) this.emitFile({ type: 'chunk', id: path.join(root, 'src/lib/server/serve.ts'), fileName: SERVER_ENTRY_FILE });
    },
  };
}
