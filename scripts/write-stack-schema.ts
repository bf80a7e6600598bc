/**
 * Writes schemas/stack-design.schema.json from the zod schema of src/service/stack-design.ts (the one
 * definition of the design file). test/stack/design.test.ts fails when the committed file is out of date.
 * Run: npx tsx scripts/write-stack-schema.ts
 */
import { writeFileSync } from 'node:fs';
import { stackDesignJsonSchema } from '../src/service/stack-design.ts';

const path = new URL('../schemas/stack-design.schema.json', import.meta.url);
writeFileSync(path, `${JSON.stringify(stackDesignJsonSchema(), null, 2)}\n`);
console.log(`wrote ${path.pathname}`);
