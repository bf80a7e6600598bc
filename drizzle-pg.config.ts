// drizzle-kit configuration for PostgreSQL: `npx drizzle-kit generate --config drizzle-pg.config.ts` turns
// src/registry/schema-pg.ts into SQL migrations in ./drizzle-pg (the SQLite twin is drizzle.config.ts → ./drizzle).
import { defineConfig } from 'drizzle-kit';

export default defineConfig({
  dialect: 'postgresql',
  schema: './src/registry/schema-pg.ts',
  out: './drizzle-pg',
});
