import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readJsonFile } from '../../src/io/read-json.js';

const folder = mkdtempSync(join(tmpdir(), 'lagparity-read-json-'));

describe('readJsonFile()', () => {
  it('refuses bytes that are not UTF-8 with their line, rather than reading them as U+FFFD', async () => {
    const path = join(folder, 'latin1.lobby.json');
    // Two ids that differ in the file but would both decode to "caf\uFFFD".
    writeFileSync(path, Buffer.concat([Buffer.from('{"players": [\n{"id": "caf'), Buffer.from([0xe9]), Buffer.from('"},\n{"id": "caf'), Buffer.from([0xe8]), Buffer.from('"}]}')]));
    const read = await readJsonFile(path);
    expect(read.ok).toBe(false);
    if (!read.ok) expect(read.issues[0]).toMatchObject({ code: 'wrong_encoding', location: 'latin1.lobby.json:2' });
  });

  it('reads a UTF-8 file with a byte-order mark and characters beyond ASCII', async () => {
    const path = join(folder, 'bom.json');
    writeFileSync(path, `\uFEFF{"team": "Saltmarsh Herons \u00e9\u20ac"}`);
    const read = await readJsonFile(path);
    expect(read.ok && read.value).toEqual({ team: 'Saltmarsh Herons \u00e9\u20ac' });
  });
});
