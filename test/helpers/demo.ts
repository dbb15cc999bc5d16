/** Test helpers: paths of the bundled demo files, and loading them. */
import { readFileSync, readdirSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

export const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
export const MATCHES = join(ROOT, 'matches');

export function readJson(path: string): unknown {
  return JSON.parse(readFileSync(path, 'utf8'));
}

export function demoLobbyPaths(): string[] {
  return readdirSync(MATCHES)
    .filter((name) => name.endsWith('.lobby.json'))
    .sort()
    .map((name) => join(MATCHES, name));
}
