/**
 * The file formats' zod schemas with the titles of their JSON Schemas
 * (json-schemas.ts, tools/generate-schemas.ts). Kept apart from
 * json-schemas.ts so that the published declarations of `jsonSchemas` do not
 * mention zod.
 */
import { lobbyFileSchema, LOBBY_FORMAT } from './lobby-file.js';
import { serverLobbyFileSchema, SERVER_LOBBY_FORMAT } from './server-lobby-file.js';
import { modelFileSchema, MODEL_FORMAT } from './model-file.js';
import { rulesFileSchema, RULES_FORMAT } from './rules-file.js';
import { TRIALS_FORMAT } from './trials-types.js';
import { trialRowSchema } from './trials-schema.js';
import { AUDIT_FORMAT, SWEEP_FORMAT, auditReportSchema, sweepReportSchema } from '../audit/audit-schema.js';
import { planFileSchema, PLAN_FORMAT } from './plan-file.js';
import { SIZE_STUDY_FORMAT, sizeStudySchema } from '../plan/size-study-schema.js';
import { fieldCheckReportSchema } from '../field/field-schema.js';
import { FIELD_CHECK_FORMAT } from '../field/field-types.js';

export const SCHEMA_FILES = {
  'lobby.schema.json': { schema: lobbyFileSchema, title: LOBBY_FORMAT, description: 'One match: players and their measured latencies.' },
  'lobby-servers.schema.json': { schema: serverLobbyFileSchema, title: SERVER_LOBBY_FORMAT, description: 'One match: players and their measured latencies to each candidate server.' },
  'model.schema.json': { schema: modelFileSchema, title: MODEL_FORMAT, description: 'A fitted hit-probability model.' },
  'rules.schema.json': { schema: rulesFileSchema, title: RULES_FORMAT, description: 'The limits a league sets on compensation.' },
  'audit-result.schema.json': { schema: auditReportSchema, title: AUDIT_FORMAT, description: 'The output of `lagparity audit --json`.' },
  'audit-sweep.schema.json': { schema: sweepReportSchema, title: SWEEP_FORMAT, description: 'The output of `lagparity audit --sweep ... --json`.' },
  'playtest-plan.schema.json': { schema: planFileSchema, title: PLAN_FORMAT, description: 'A playtest plan: conditions, repetitions, participants, round length, seed, and what a size study assumes and aims for.' },
  'playtest-size.schema.json': { schema: sizeStudySchema, title: SIZE_STUDY_FORMAT, description: 'The output of `lagparity plan size --json`: power, interval widths and the recommended size.' },
  'field-check.schema.json': { schema: fieldCheckReportSchema, title: FIELD_CHECK_FORMAT, description: 'The output of `lagparity field-check --json`.' },
  'trials-row.schema.json': { schema: trialRowSchema, title: `${TRIALS_FORMAT} row`, description: 'One CSV row of trials data, with its fields read as numbers.' },
} as const;
