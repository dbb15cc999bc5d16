import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { jsonSchemas } from '../../src/formats/json-schemas.js';
import { MATCHES, ROOT, demoLobbyPaths, readJson } from '../helpers/demo.js';

const schemas = jsonSchemas();
// ajv (a general-purpose JSON Schema validator from the npm registry) is the outside reference here.
const ajv = new Ajv2020({ strict: false, allErrors: true });

describe('jsonSchemas()', () => {
  it.each(Object.keys(schemas))('docs/schemas/%s is current (run npm run schemas:generate)', (name) => {
    const committed = JSON.parse(readFileSync(join(ROOT, 'docs', 'schemas', name), 'utf8'));
    expect(committed).toEqual(schemas[name]);
  });

  it('validates the bundled lobbies, rules and models', () => {
    const lobby = ajv.compile(schemas['lobby.schema.json'] as object);
    for (const path of demoLobbyPaths()) expect(lobby(readJson(path)), path).toBe(true);
    expect(ajv.compile(schemas['rules.schema.json'] as object)(readJson(join(MATCHES, 'league-rules.json')))).toBe(true);
    const model = ajv.compile(schemas['model.schema.json'] as object);
    expect(model(readJson(join(MATCHES, 'model.json')))).toBe(true);
  });

  it('rejects what the zod schema rejects on simple cases', () => {
    const lobby = ajv.compile(schemas['lobby.schema.json'] as object);
    expect(lobby({ format: 'lagparity/lobby@1', match_id: 'm', attribute: 'hit_area', difficulty: 1, players: [] })).toBe(false);
    expect(lobby({ format: 'lagparity/lobby@1', match_id: 'm', attribute: 'hit_area', difficulty: 1, players: [{ id: 'a', latency_ms: -1 }] })).toBe(false);
  });
});
