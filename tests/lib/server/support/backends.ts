/**
 * Test databases for server tests: PGlite (in memory) always, and PostgreSQL when
 * TEST_DATABASE_URL is set (a fresh database per test file, dropped afterwards).
 */
import { randomBytes } from 'node:crypto';
import pg from 'pg';
import { openDatabase, type DatabaseHandle } from '../../../../src/lib/server/db';

/** A backend under test. */
export type Backend = { name: 'pglite' | 'postgres'; open: () => Promise<DatabaseHandle> };

async function openFreshPostgres(adminUrl: string): Promise<DatabaseHandle> {
  const name = `quiesce_test_${randomBytes(6).toString('hex')}`;
  const admin = new pg.Client({ connectionString: adminUrl });
  await admin.connect();
  try {
    await admin.query(`create database ${name}`);
  } finally {
    await admin.end();
  }
  const url = new URL(adminUrl);
  url.pathname = `/${name}`;
  const handle = await openDatabase({ url: url.toString() });
  return {
    ...handle,
    close: async () => {
      await handle.close();
      const dropper = new pg.Client({ connectionString: adminUrl });
      await dropper.connect();
      try {
        await dropper.query(`drop database if exists ${name} with (force)`);
      } finally {
        await dropper.end();
      }
    },
  };
}

/** Backends to run each server test against (describe.each over this list). */
export const BACKENDS: Backend[] = [
  { name: 'pglite', open: () => openDatabase() },
  ...(process.env.TEST_DATABASE_URL
    ? [{ name: 'postgres' as const, open: () => openFreshPostgres(process.env.TEST_DATABASE_URL!) }]
    : []),
];
