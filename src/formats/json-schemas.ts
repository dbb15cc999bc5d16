/**
 * JSON Schemas (draft 2020-12) of the file formats, generated from their zod
 * schemas, so that a matchmaker written in another language can validate its
 * payloads. The copies in docs/schemas/ are written by `npm run
 * schemas:generate`; a test checks they are current.
 *
 * A JSON Schema carries the types, bounds and required fields; a few checks
 * across fields (cap >= floor, unique player ids, hits <= attempts) exist only
 * in the zod schemas and are documented in docs/formats.md.
 */
import { z } from 'zod';
import { SCHEMA_FILES } from './schema-files.js';

/** Every format's JSON Schema, keyed by file name. Input view: fields with defaults are optional. */
export function jsonSchemas(): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const [name, { schema, title, description }] of Object.entries(SCHEMA_FILES)) {
    const generated = z.toJSONSchema(schema, { io: 'input', unrepresentable: 'any' }) as Record<string, unknown>;
    out[name] = { ...generated, $id: `https://lagparity.invalid/schemas/${name}`, title, description };
  }
  return out;
}
