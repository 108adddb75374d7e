/// <reference types="astro/client" />

declare namespace App {
  /** Per-request values set by src/middleware.ts, read by every page and endpoint. */
  interface Locals {
    /** The process-wide database client (src/lib/server/db.ts). */
    db: import('./lib/server/db').Db;
    /** The signed-in user, or null when anonymous. */
    user: import('./lib/server/session').SessionUser | null;
    /** The current session, or null when anonymous. */
    session: import('./lib/server/session').SessionInfo | null;
    /** Demo mode (QUIESCE_DEMO): demo accounts are listed and mail is shown in the outbox. */
    demo: boolean;
    /** The local outbox page is available (demo mode, mail captured instead of delivered). */
    outbox: boolean;
  }
}
