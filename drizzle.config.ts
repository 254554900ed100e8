import { defineConfig } from 'drizzle-kit';

// Migrations are generated from db/schema and committed; the server applies them at start on PGlite or PostgreSQL.
export default defineConfig({
  dialect: 'postgresql',
  schema: './db/schema/index.ts',
  out: './db/migrations',
});
