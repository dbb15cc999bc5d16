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

/** The chunk that `from`, or a chunk it imports statically, loads with `import("./chunks/<name>-<hash>.js")`. */
function lazyChunk(from: string, name: string): string {
  const pattern = new RegExp(`import\\(["'](\\.{1,2}/(?:chunks/)?${name}-[\\w-]+\\.js)["']\\)`);
  for (const file of staticGraph(from)) {
    const match = readFileSync(file, 'utf8').match(pattern);
    if (match !== null) return join(dirname(file), match[1] as string);
  }
  throw new Error(`${from} never loads a ${name} chunk`);
}

/**
 * Packages a command must not load before it needs them, each told by a string
 * literal of its code (string literals survive minification): zod by its base
 * class's name, jsonc-parser by one of its parse error codes.
 */
const HEAVY: Record<string, string> = { zod: '"$ZodType"', 'jsonc-parser': '"CloseBraceExpected"' };

/** The heavy packages found in the files of a static graph. */
function heavyIn(files: Iterable<string>): string[] {
  const texts = [...files].map((file) => readFileSync(file, 'utf8'));
  return Object.keys(HEAVY).filter((name) => texts.some((text) => text.includes(HEAVY[name] as string)));
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
    expect(files.some((file) => file.includes('render-report') || file.includes('report-run'))).toBe(false);
    lazyChunk(lazyChunk(BIN, 'report-run'), 'render-report');
  });

  it('loads each command’s run code only when that command runs', () => {
    const start = [...staticGraph(BIN)];
    for (const command of ['balance', 'fit', 'audit', 'summarize', 'report', 'validate', 'plan-schedule', 'plan-size']) {
      lazyChunk(BIN, `${command}-run`);
      expect(start.some((file) => file.includes(`${command}-run`)), command).toBe(false);
    }
    expect(heavyIn(start)).toEqual([]);
  });

  it('runs `fit` without zod or jsonc-parser, with --out too (the model file is compiled, not checked by the schema again)', () => {
    const fitRun = lazyChunk(BIN, 'fit-run');
    expect(heavyIn(staticGraph(fitRun, staticGraph(BIN)))).toEqual([]);
    expect(heavyIn(staticGraph(lazyChunk(fitRun, 'to-model-file'), staticGraph(BIN)))).toEqual([]);
    // The markers do find the packages where they are loaded, so an empty list above means something.
    expect(heavyIn(staticGraph(lazyChunk(BIN, 'validate-run')))).toEqual(Object.keys(HEAVY));
  });

  it('places the size study\'s worker script beside the chunk that starts it, and loads neither at start', () => {
    const sizeRun = lazyChunk(BIN, 'plan-size-run');
    const worker = join(dirname(sizeRun), 'simulation-worker.js');
    expect(readFileSync(worker, 'utf8')).toContain('parentPort');
    // The chunk (or a chunk it loads statically) resolves the worker as `new URL("./simulation-worker.js", import.meta.url)` from its own folder.
    expect([...staticGraph(sizeRun)].some((file) => dirname(file) === dirname(worker) && readFileSync(file, 'utf8').includes('new URL("./simulation-worker.js",import.meta.url)'))).toBe(true);
    expect([...staticGraph(BIN)].some((file) => file.includes('simulation-worker') || readFileSync(file, 'utf8').includes('worker_threads'))).toBe(false);
  });

  it('carries the licences of the packages it bundles', () => {
    const notice = readFileSync(join(ROOT, 'dist', 'bin', 'THIRD-PARTY-LICENSES.txt'), 'utf8');
    for (const name of ['zod@', 'commander@', 'cli-table3@', '@stdlib/stats-base-dists-normal-cdf@']) expect(notice).toContain(name);
    expect(notice).toContain('Apache License');
    expect(notice).toContain('MIT');
  });

  it('runs every command’s help', () => {
    for (const command of ['balance', 'fit', 'audit', 'summarize', 'report', 'validate', 'plan schedule', 'plan size']) {
      const run = runCli([...command.split(' '), '--help']);
      expect(run.status, command).toBe(0);
      expect(run.stdout, command).toContain(`Usage: lagparity ${command}`);
    }
  });
});
