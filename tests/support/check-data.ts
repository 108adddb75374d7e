/** Where the outside check data lives: `../shared/check-data` beside the repository (see DESIGN.md), or $QUIESCE_CHECK_DATA. */
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const repoRoot = resolve(fileURLToPath(new URL('../..', import.meta.url)));

/** The check-data folder. */
export const CHECK_DATA_DIR = process.env.QUIESCE_CHECK_DATA ?? join(repoRoot, '..', 'shared', 'check-data');

/** The KISS2 benchmark folder, with a trailing slash. */
export const KISS2_DIR = join(CHECK_DATA_DIR, 'kiss2') + '/';
