/** Writes docs/schemas/*.schema.json from the zod schemas (npm run schemas:generate). */
import { writeFileSync, mkdirSync } from 'node:fs';
import { jsonSchemas } from '../src/formats/json-schemas.js';

mkdirSync('docs/schemas', { recursive: true });
for (const [name, schema] of Object.entries(jsonSchemas())) {
  writeFileSync(`docs/schemas/${name}`, `${JSON.stringify(schema, null, 2)}\n`);
  console.error(`wrote docs/schemas/${name}`);
}
