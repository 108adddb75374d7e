/** The project root. */
export const ROOT: string;
/** The absolute output directory (QUIESCE_OUT_DIR or dist/). */
export function outDirOf(outDir?: string): string;
/** Why a build is needed, or null when the existing one is current. */
export function whyBuild(outDir?: string): string | null;
/** Builds into outDir unless the build there is current; returns true when it built. */
export function ensureBuilt(options?: { outDir?: string; log?: (message: string) => void }): Promise<boolean>;
/** The production server of a build (dist/server/serve.mjs). */
export function serverEntryOf(outDir?: string): string;
/** Whether a process with this id exists (EPERM: it does, but belongs to another user). */
export function isAlive(pid: number): boolean;
