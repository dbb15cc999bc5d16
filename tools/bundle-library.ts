/**
 * Bundles the library for the package's exports (run by `npm run build` after
 * tsc and the CLI bundle), so that installing lagparity installs lagparity
 * alone: its few dependencies (zod, jsonc-parser and four @stdlib functions,
 * which pull in about 200 @stdlib packages, 23 MB) are bundled in, and the
 * charting packages of the HTML report are optional peer dependencies,
 * imported on the report's first chart (src/report/render-svg.ts).
 *
 * What, from tsc's output in dist/:
 * - `dist/lib/lagparity.js`: the main entry as one ES module;
 * - `dist/cjs/index.cjs`: the same as CommonJS, for `require('lagparity')`,
 *   beside a copy of the type declarations in a folder whose package.json
 *   says `"type": "commonjs"` (TypeScript reads them as CommonJS there, so a
 *   `module: commonjs` project gets no TS1479);
 * - `dist/lib/report.js`: `lagparity/report`, with vega and vega-lite left as
 *   imports;
 * - `dist/lib/THIRD-PARTY-LICENSES.txt`: the bundled packages' licences.
 *
 * Usage: tsx tools/bundle-library.ts (or `bundleLibrary(root)` from the test setup).
 */
import { cpSync, existsSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { dirname, join, relative, sep } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { type BuildOptions, build } from 'esbuild';
import { bundledPackage, englishOnlyZod, licenceNotice, packageFolderOf } from './bundle-cli.js';

const common: BuildOptions = {
  bundle: true,
  platform: 'node',
  target: 'node20',
  // ESM builds first (jsonc-parser's CommonJS build loads its parts by computed paths).
  mainFields: ['module', 'main'],
  minify: true,
  legalComments: 'none',
  plugins: [englishOnlyZod],
  metafile: true,
  logLevel: 'warning',
};

/** Every .d.ts below `from`, copied to the same place below `to`. */
function copyDeclarations(from: string, to: string): void {
  for (const entry of readdirSync(from)) {
    const source = join(from, entry);
    if (['bin', 'lib', 'cjs', 'cli'].includes(entry) && from.endsWith(`${sep}dist`)) continue;
    if (statSync(source).isDirectory()) copyDeclarations(source, join(to, entry));
    else if (entry.endsWith('.d.ts')) cpSync(source, join(to, entry));
  }
}

/** Bundle the library entries; returns the bundled packages. */
export async function bundleLibrary(root: string): Promise<string[]> {
  const dist = join(root, 'dist');
  const main = join(dist, 'index.js');
  if (!existsSync(main)) throw new Error(`bundle-library: ${relative(root, main)} is missing; run tsc first`);
  const lib = join(dist, 'lib');
  const cjs = join(dist, 'cjs');
  rmSync(lib, { recursive: true, force: true });
  rmSync(cjs, { recursive: true, force: true });
  const results = await Promise.all([
    build({
      ...common,
      absWorkingDir: root,
      entryPoints: { lagparity: main },
      outdir: lib,
      format: 'esm',
      // Bundled CommonJS packages call require() for Node's own modules.
      banner: { js: "import { createRequire as __lagparityRequire } from 'node:module'; const require = __lagparityRequire(import.meta.url);" },
    }),
    build({ ...common, absWorkingDir: root, entryPoints: { index: main }, outdir: cjs, outExtension: { '.js': '.cjs' }, format: 'cjs' }),
    build({
      ...common,
      absWorkingDir: root,
      entryPoints: { report: join(dist, 'report', 'index.js') },
      outdir: lib,
      format: 'esm',
      external: ['vega', 'vega-lite'],
      banner: { js: "import { createRequire as __lagparityRequire } from 'node:module'; const require = __lagparityRequire(import.meta.url);" },
    }),
  ]);
  copyDeclarations(dist, cjs);
  writeFileSync(join(cjs, 'package.json'), `${JSON.stringify({ type: 'commonjs' }, null, 2)}\n`);
  const folders = new Set<string>();
  for (const result of results) for (const input of Object.keys((result.metafile?.inputs ?? {}))) {
    const folder = packageFolderOf(input);
    if (folder !== null) folders.add(folder);
  }
  const packages = [...folders].map((folder) => bundledPackage(root, folder)).sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
  writeFileSync(join(lib, 'THIRD-PARTY-LICENSES.txt'), licenceNotice(packages, 'lagparity.js, report.js and cjs/index.cjs'));
  return packages.map((entry) => `${entry.name}@${entry.version}`);
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const root = join(dirname(fileURLToPath(import.meta.url)), '..');
  const names = await bundleLibrary(root);
  process.stderr.write(`bundled the library into dist${sep}lib and dist${sep}cjs with ${names.length} packages\n`);
}
