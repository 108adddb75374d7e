/**
 * Demo identities of the invented equipment maker "Halvorsen Machine Works".
 * The passwords and the CI key are public on purpose (README, sign-in page in
 * demo mode); production runs with QUIESCE_DEMO=0 and never seeds them.
 */
import type { Role } from '../schema';

/** The demo workspace. */
export const DEMO_WORKSPACE = { slug: 'halvorsen', name: 'Halvorsen Machine Works' } as const;

/** One demo account per role. */
export const DEMO_ACCOUNTS: readonly { role: Role; email: string; password: string; displayName: string }[] = [
  { role: 'owner', email: 'owner@demo.quiesce.test', password: 'quiesce-demo-owner', displayName: 'Ingrid Halvorsen' },
  { role: 'editor', email: 'editor@demo.quiesce.test', password: 'quiesce-demo-editor', displayName: 'Tomas Berg' },
  { role: 'reviewer', email: 'reviewer@demo.quiesce.test', password: 'quiesce-demo-reviewer', displayName: 'Amira Haddad' },
  { role: 'viewer', email: 'viewer@demo.quiesce.test', password: 'quiesce-demo-viewer', displayName: 'Leo Fischer' },
];

/** The demo CI key (read-only, demo workspace); stored hashed like any other key. */
export const DEMO_CI_KEY = {
  name: 'Demo CI (line 3 firmware build)',
  value: 'qk_demo_halvorsen_line3_4f7c2a9e81d0b6c5',
} as const;
