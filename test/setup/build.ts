// The end-to-end tests spawn the built CLI, so the suite builds it once first:
// tsc, then the bundle of `tools/bundle-cli.ts` that the `bin` points to, and the
// library bundles the package's exports point to (`tools/bundle-library.ts`).
// Type errors are the typecheck step's business; tsc still emits here.
import { spawnSync } from 'node:child_process';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { bundleCli } from '../../tools/bundle-cli.js';
import { bundleLibrary } from '../../tools/bundle-library.js';

export default async function build(): Promise<void> {
  const root = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
  const result = spawnSync(process.execPath, [join(root, 'node_modules', 'typescript', 'bin', 'tsc'), '-p', join(root, 'tsconfig.json')], { encoding: 'utf8' });
  if (result.status !== 0 && result.status !== 2) throw new Error(`build failed:\n${result.stdout}${result.stderr}`);
  await bundleCli(root);
  await bundleLibrary(root);
}
