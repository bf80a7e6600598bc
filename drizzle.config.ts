// drizzle-kit configuration: `npx drizzle-kit generate` turns the schema files into SQL migrations in ./drizzle.
import { defineConfig } from 'drizzle-kit';

export default defineConfig({
  dialect: 'sqlite',
  schema: './src/registry/schema*.ts',
  out: './drizzle',
});
