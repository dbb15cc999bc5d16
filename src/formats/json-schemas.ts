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
import { lobbyFileSchema, LOBBY_FORMAT } from './lobby-file.js';
import { modelFileSchema, MODEL_FORMAT } from './model-file.js';
import { rulesFileSchema, RULES_FORMAT } from './rules-file.js';
import { TRIALS_FORMAT } from './trials-csv.js';
import { trialRowSchema } from './trials-schema.js';
import { AUDIT_FORMAT, auditReportSchema, sweepReportSchema } from '../audit/audit-schema.js';

export const SCHEMA_FILES = {
  'lobby.schema.json': { schema: lobbyFileSchema, title: LOBBY_FORMAT, description: 'One match: players and their measured latencies.' },
  'model.schema.json': { schema: modelFileSchema, title: MODEL_FORMAT, description: 'A fitted hit-probability model.' },
  'rules.schema.json': { schema: rulesFileSchema, title: RULES_FORMAT, description: 'The limits a league sets on compensation.' },
  'audit-result.schema.json': { schema: auditReportSchema, title: AUDIT_FORMAT, description: 'The output of `lagparity audit --json`.' },
  'audit-sweep.schema.json': { schema: sweepReportSchema, title: 'lagparity/audit-sweep@1', description: 'The output of `lagparity audit --sweep ... --json`.' },
  'trials-row.schema.json': { schema: trialRowSchema, title: `${TRIALS_FORMAT} row`, description: 'One CSV row of trials data, with its fields read as numbers.' },
} as const;

/** Every format's JSON Schema, keyed by file name. Input view: fields with defaults are optional. */
export function jsonSchemas(): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const [name, { schema, title, description }] of Object.entries(SCHEMA_FILES)) {
    const generated = z.toJSONSchema(schema, { io: 'input', unrepresentable: 'any' }) as Record<string, unknown>;
    out[name] = { ...generated, $id: `https://lagparity.invalid/schemas/${name}`, title, description };
  }
  return out;
}
