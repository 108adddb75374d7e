import { defineConfig } from 'drizzle-kit';

/** drizzle-kit settings: `npm run db:generate` writes SQL migrations from the schema into drizzle/. */
export default defineConfig({
  dialect: 'postgresql',
  schema: './src/lib/server/schema.ts',
  out: './drizzle',
  strict: true,
  verbose: true,
});
