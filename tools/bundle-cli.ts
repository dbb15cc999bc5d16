/**
 * Bundles the command line into `dist/bin/` (run by `npm run build` after tsc).
 *
 * Why: the CLI's dependencies are hundreds of small module files (the @stdlib
 * functions alone are about 250), and resolving and compiling them one by one
 * cost about 0.2 s of every command's start on the reference machine, more
 * than the whole time of a small fit. One bundle starts in about 0.1 s.
 *
 * What: `dist/cli/main.js` (tsc's output) and everything it imports statically
 * (commander and the commands' registrations) in `dist/bin/lagparity.js`. Each
 * command's run code (`src/cli/X-run.ts`, imported by its action) becomes a
 * chunk in `dist/bin/chunks/`, loaded only when that command runs, with code
 * that several chunks use in shared chunks beside it; the report's renderer
 * is a further chunk loaded only by `lagparity report`; the size study's
 * worker thread script (`src/plan/simulation-worker.ts`) is an entry of its
 * own, `dist/bin/chunks/simulation-worker.js`, beside the chunk that starts
 * it, loaded only when `lagparity plan size` runs; the fit's refit worker
 * (`src/model/refit-worker.ts`) likewise, `dist/bin/chunks/refit-worker.js`,
 * loaded only when `lagparity fit` runs its refits on threads, and the field
 * check's (`src/field/calibration-worker.ts`), and the split read's
 * (`src/io/read-part-worker.ts`, loaded when `fit` or `field-check` reads a
 * large CSV file on two threads); and the charting
 * packages (vega, vega-lite) stay outside, imported from node_modules when a
 * report is drawn.
 * The library entries (`dist/index.js`, `dist/report/`) are not bundled: they
 * are tsc's output, as a library's should be. Licences of the bundled
 * packages are collected into `dist/bin/THIRD-PARTY-LICENSES.txt`.
 *
 * Usage: tsx tools/bundle-cli.ts (or `bundleCli(root)` from the test setup).
 */
import { chmodSync, existsSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, join, relative, sep } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { type Plugin, build } from 'esbuild';

/**
 * zod's locales, all 50 or so re-exported from one index, are 40% of the
 * bundled bytes; the CLI speaks English only (its messages are its own, zod's
 * English texts are the fallback), so the bundle keeps `en` alone, which saves
 * about 10 ms of every start.
 */
export const englishOnlyZod: Plugin = {
  name: 'zod-english-only',
  setup(builder) {
    builder.onLoad({ filter: /zod[\\/]v4[\\/]locales[\\/]index\.js$/ }, (args) => ({
      contents: 'export { default as en } from "./en.js";',
      resolveDir: dirname(args.path),
    }));
  },
};

/** Packages left to node_modules: the charting stack, loaded only by `report`, and embedded DuckDB (a native binding), loaded only for Parquet, globs and `--latency-step`. */
const EXTERNAL = ['vega', 'vega-lite', '@duckdb/node-api'];

/** The package folder of a bundled input path like `node_modules/@scope/name/lib/x.js`, or null for the project's own files. */
export function packageFolderOf(input: string): string | null {
  const parts = input.split(/[\\/]/);
  const at = parts.lastIndexOf('node_modules');
  if (at < 0) return null;
  const scoped = (parts[at + 1] ?? '').startsWith('@');
  return parts.slice(0, at + (scoped ? 3 : 2)).join('/');
}

export interface Bundled {
  readonly name: string;
  readonly version: string;
  readonly license: string;
  readonly text: string;
}

export function bundledPackage(root: string, folder: string): Bundled {
  const path = join(root, folder);
  const manifest = JSON.parse(readFileSync(join(path, 'package.json'), 'utf8')) as { name: string; version?: string; license?: string };
  const file = readdirSync(path).find((entry) => /^(licen[cs]e|copying)(\.|$)/i.test(entry));
  const license = manifest.license ?? 'unknown';
  const text = file === undefined ? `(no licence file in the package; declared licence: ${license})` : readFileSync(join(path, file), 'utf8').trim();
  return { name: manifest.name, version: manifest.version ?? '?', license, text };
}

/** One section per distinct licence text, naming every package under it. */
export function licenceNotice(packages: readonly Bundled[], bundle = 'lagparity.js'): string {
  const byText = new Map<string, Bundled[]>();
  for (const entry of packages) byText.set(entry.text, [...(byText.get(entry.text) ?? []), entry]);
  const sections = [...byText].map(([text, entries]) => `${entries.map((entry) => `${entry.name}@${entry.version} (${entry.license})`).join('\n')}\n\n${text}\n`);
  return `Packages bundled into ${bundle}, grouped by licence text.\n\n${sections.join(`\n${'-'.repeat(72)}\n\n`)}`;
}

/** Bundle `dist/cli/main.js` into `dist/bin/`; returns the bundled packages. */
export async function bundleCli(root: string): Promise<string[]> {
  const entry = join(root, 'dist', 'cli', 'main.js');
  const worker = join(root, 'dist', 'plan', 'simulation-worker.js');
  const refitWorker = join(root, 'dist', 'model', 'refit-worker.js');
  const calibrationWorker = join(root, 'dist', 'field', 'calibration-worker.js');
  const partWorker = join(root, 'dist', 'io', 'read-part-worker.js');
  for (const file of [entry, worker, refitWorker, calibrationWorker, partWorker]) if (!existsSync(file)) throw new Error(`bundle-cli: ${relative(root, file)} is missing; run tsc first`);
  const outdir = join(root, 'dist', 'bin');
  rmSync(outdir, { recursive: true, force: true });
  const result = await build({
    absWorkingDir: root,
    // The worker scripts are entries of their own, beside the chunks that start them
    // (`new URL('./simulation-worker.js', import.meta.url)` in src/plan/run-studies.ts,
    // `new URL('./refit-worker.js', import.meta.url)` in src/model/fit-model-threads.ts,
    // `new URL('./calibration-worker.js', import.meta.url)` in src/field/check-field-threads.ts,
    // `new URL('./read-part-worker.js', import.meta.url)` in src/io/split-read.ts).
    entryPoints: { lagparity: entry, 'chunks/simulation-worker': worker, 'chunks/refit-worker': refitWorker, 'chunks/calibration-worker': calibrationWorker, 'chunks/read-part-worker': partWorker },
    outdir,
    bundle: true,
    splitting: true,
    format: 'esm',
    platform: 'node',
    target: 'node20',
    // ESM builds first (jsonc-parser's CommonJS build loads its parts by computed paths).
    mainFields: ['module', 'main'],
    external: EXTERNAL,
    chunkNames: 'chunks/[name]-[hash]',
    // Bundled CommonJS packages call require() for Node's own modules.
    banner: { js: "import { createRequire as __lagparityRequire } from 'node:module'; const require = __lagparityRequire(import.meta.url);" },
    minifyWhitespace: true,
    minifySyntax: true,
    legalComments: 'none',
    plugins: [englishOnlyZod],
    metafile: true,
    logLevel: 'warning',
  });
  const folders = new Set<string>();
  for (const input of Object.keys(result.metafile.inputs)) {
    const folder = packageFolderOf(input);
    if (folder !== null) folders.add(folder);
  }
  const packages = [...folders].map((folder) => bundledPackage(root, folder)).sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
  writeFileSync(join(outdir, 'THIRD-PARTY-LICENSES.txt'), licenceNotice(packages));
  chmodSync(join(outdir, 'lagparity.js'), 0o755);
  return packages.map((entry) => `${entry.name}@${entry.version}`);
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const root = join(dirname(fileURLToPath(import.meta.url)), '..');
  const names = await bundleCli(root);
  process.stderr.write(`bundled the CLI into dist${sep}bin${sep}lagparity.js with ${names.length} packages\n`);
}
