// The bundled command line (tools/bundle-cli.ts, built by test/setup/build.ts):
// what `bin` points at, and what it loads at start.
import { readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { ROOT } from '../helpers/demo.js';
import { runCli } from '../helpers/cli.js';

const BIN = join(ROOT, 'dist', 'bin', 'lagparity.js');

/** Files reached from `file` by static `import ... from "./x.js"` (not `import()`), the file included. */
function staticGraph(file: string, seen = new Set<string>()): Set<string> {
  if (seen.has(file)) return seen;
  seen.add(file);
  const text = readFileSync(file, 'utf8');
  for (const match of text.matchAll(/(?:^|[;\n}])\s*(?:import|export)\s*(?:[\w*{}\s,$]+from\s*)?["'](\.[^"']+)["']/g)) {
    staticGraph(join(dirname(file), match[1] as string), seen);
  }
  return seen;
}

describe('bundled CLI', () => {
  it('is what package.json `bin` names, with a node shebang', () => {
    const manifest = JSON.parse(readFileSync(join(ROOT, 'package.json'), 'utf8')) as { bin: Record<string, string> };
    expect(manifest.bin).toEqual({ lagparity: 'dist/bin/lagparity.js' });
    expect(readFileSync(BIN, 'utf8').startsWith('#!/usr/bin/env node\n')).toBe(true);
  });

  it('loads the charting packages only through the report chunk, never at start', () => {
    const files = [...staticGraph(BIN)];
    expect(files.length).toBeGreaterThanOrEqual(2); // the entry and its shared chunk
    for (const file of files) {
      const text = readFileSync(file, 'utf8');
      expect(text, file).not.toMatch(/from\s*["']vega(-lite)?["']/);
    }
    expect(files.some((file) => file.includes('render-report'))).toBe(false);
    expect(readFileSync(BIN, 'utf8')).toMatch(/import\(["']\.\/chunks\/render-report-[\w-]+\.js["']\)/);
  });

  it('carries the licences of the packages it bundles', () => {
    const notice = readFileSync(join(ROOT, 'dist', 'bin', 'THIRD-PARTY-LICENSES.txt'), 'utf8');
    for (const name of ['zod@', 'commander@', 'cli-table3@', '@stdlib/stats-base-dists-normal-cdf@']) expect(notice).toContain(name);
    expect(notice).toContain('Apache License');
    expect(notice).toContain('MIT');
  });

  it('runs every command’s help', () => {
    for (const command of ['balance', 'fit', 'audit', 'summarize', 'report', 'validate']) {
      const run = runCli([command, '--help']);
      expect(run.status, command).toBe(0);
      expect(run.stdout, command).toContain(`Usage: lagparity ${command}`);
    }
  });
});
