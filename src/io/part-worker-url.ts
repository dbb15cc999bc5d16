/**
 * Where the split read's worker script is (`read-part-worker.ts`), beside this module both in tsc's
 * output and in the CLI bundle (`tools/bundle-cli.ts`). Imported by the CLI only: the library's
 * bundles have no worker script beside them (and no import.meta as CommonJS), so a library caller
 * reads on one thread unless it names a script.
 */
export const PART_WORKER_URL = new URL('./read-part-worker.js', import.meta.url);
