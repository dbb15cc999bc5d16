import { describe, expect, it } from 'vitest';
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { writeFileAtomic } from '../../src/io/write-file.js';

function folder(): string {
  return mkdtempSync(join(tmpdir(), 'lagparity-write-'));
}

describe('writeFileAtomic()', () => {
  it('writes a new file and leaves no temporary file behind', async () => {
    const dir = folder();
    const path = join(dir, 'report.html');
    const written = await writeFileAtomic(path, '<p>é</p>');
    expect(written).toEqual({ ok: true, value: undefined, warnings: [] });
    expect(readFileSync(path, 'utf8')).toBe('<p>é</p>');
    expect(readdirSync(dir)).toEqual(['report.html']);
  });

  it('refuses to overwrite without force and leaves the old file whole', async () => {
    const dir = folder();
    const path = join(dir, 'report.html');
    const old = 'old contents\n'.repeat(1000);
    writeFileSync(path, old);
    const written = await writeFileAtomic(path, 'new');
    expect(written.ok).toBe(false);
    if (written.ok) return;
    expect(written.issues).toEqual([
      { code: 'file_exists', severity: 'error', location: path, message: 'the output requires a path with no file yet (pass `--force` to replace it), got an existing file' },
    ]);
    expect(readFileSync(path, 'utf8')).toBe(old);
    expect(readdirSync(dir)).toEqual(['report.html']);
  });

  it('replaces an existing file with force', async () => {
    const dir = folder();
    const path = join(dir, 'report.html');
    writeFileSync(path, 'old');
    const written = await writeFileAtomic(path, 'new', { force: true });
    expect(written.ok).toBe(true);
    expect(readFileSync(path, 'utf8')).toBe('new');
    expect(readdirSync(dir)).toEqual(['report.html']);
  });

  it('gives cannot_write when the folder does not exist', async () => {
    const path = join(folder(), 'missing', 'report.html');
    const written = await writeFileAtomic(path, 'x');
    expect(written.ok).toBe(false);
    if (written.ok) return;
    expect(written.issues[0]?.code).toBe('cannot_write');
    expect(written.issues[0]?.message).toContain('its folder does not exist');
  });

  it('refuses a folder as the target even with force, and keeps the folder', async () => {
    const dir = folder();
    const path = join(dir, 'out');
    mkdirSync(path);
    writeFileSync(join(path, 'inside.txt'), 'keep');
    expect((await writeFileAtomic(path, 'x')).ok).toBe(false);
    const forced = await writeFileAtomic(path, 'x', { force: true });
    expect(forced.ok).toBe(false);
    if (!forced.ok) expect(forced.issues[0]?.code).toBe('cannot_write');
    expect(readFileSync(join(path, 'inside.txt'), 'utf8')).toBe('keep');
    expect(readdirSync(dir)).toEqual(['out']);
  });

  it('lets exactly one of two concurrent writers create the file', async () => {
    const dir = folder();
    const path = join(dir, 'race.txt');
    const results = await Promise.all(['first', 'second', 'third'].map((text) => writeFileAtomic(path, text)));
    expect(results.filter((result) => result.ok)).toHaveLength(1);
    expect(['first', 'second', 'third']).toContain(readFileSync(path, 'utf8'));
    expect(readdirSync(dir)).toEqual(['race.txt']);
  });
});
