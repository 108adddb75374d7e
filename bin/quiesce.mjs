#!/usr/bin/env node
// `quiesce` CLI entry: loads the TypeScript sources through tsx, so no build step is needed.
import { register } from 'tsx/esm/api';

register();
// a closed pipe (e.g. `quiesce convert x.qfl --to json | head`) is not an error
process.stdout.on('error', (e) => {
  if (e && e.code === 'EPIPE') process.exit(process.exitCode ?? 0);
});
const { main } = await import(new URL('../src/lib/cli/main.ts', import.meta.url).href);
process.exitCode = await main(process.argv.slice(2));
