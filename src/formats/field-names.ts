/**
 * "Did you mean": the field names of every format, gathered once from their
 * zod schemas when a misspelt field first needs a suggestion, and the
 * closest of them to an unknown name by the optimal string alignment
 * distance (Damerau-Levenshtein restricted to adjacent transpositions; e.g.
 * Navarro 2001, "A guided tour to approximate string matching", section 2.1).
 */
import { SCHEMA_FILES } from './schema-files.js';

let names: readonly string[] | null = null;

/** Every object key in a zod schema, walking its definition (objects, wrappers, lists, unions, records, pipes). */
function gather(root: unknown, into: Set<string>): void {
  const stack: unknown[] = [root];
  const seen = new Set<unknown>();
  while (stack.length > 0) {
    const schema = stack.pop();
    if (schema === null || typeof schema !== 'object' || seen.has(schema)) continue;
    seen.add(schema);
    const def = (schema as { _zod?: { def?: Record<string, unknown> } })._zod?.def;
    if (def === undefined) continue;
    const shape = def.shape;
    if (shape !== null && typeof shape === 'object') {
      for (const [key, value] of Object.entries(shape)) {
        into.add(key);
        stack.push(value);
      }
    }
    for (const part of ['innerType', 'element', 'valueType', 'in', 'out']) if (def[part] !== undefined) stack.push(def[part]);
    if (Array.isArray(def.options)) stack.push(...(def.options as unknown[]));
  }
}

function fieldNames(): readonly string[] {
  if (names === null) {
    const found = new Set<string>();
    for (const { schema } of Object.values(SCHEMA_FILES)) gather(schema, found);
    names = [...found].sort();
  }
  return names;
}

/** Optimal string alignment distance between two short strings. */
export function editDistance(left: string, right: string): number {
  const rows = left.length + 1;
  const columns = right.length + 1;
  const table = new Array<number>(rows * columns);
  for (let row = 0; row < rows; row += 1) table[row * columns] = row;
  for (let column = 0; column < columns; column += 1) table[column] = column;
  for (let row = 1; row < rows; row += 1) {
    for (let column = 1; column < columns; column += 1) {
      const cost = left[row - 1] === right[column - 1] ? 0 : 1;
      let best = Math.min((table[(row - 1) * columns + column] as number) + 1, (table[row * columns + column - 1] as number) + 1, (table[(row - 1) * columns + column - 1] as number) + cost);
      if (row > 1 && column > 1 && left[row - 1] === right[column - 2] && left[row - 2] === right[column - 1]) best = Math.min(best, (table[(row - 2) * columns + column - 2] as number) + 1);
      table[row * columns + column] = best;
    }
  }
  return table[rows * columns - 1] as number;
}

/** The known field name closest to `name` (at most 2 edits, and fewer than a third of its length), or null. */
export function closestFieldName(name: string): string | null {
  if (name.length > 64) return null;
  let best: string | null = null;
  let bestDistance = Infinity;
  for (const candidate of fieldNames()) {
    const distance = editDistance(name.toLowerCase(), candidate);
    if (distance < bestDistance) {
      best = candidate;
      bestDistance = distance;
    }
  }
  return bestDistance > 0 && bestDistance <= Math.min(2, Math.floor(name.length / 3)) ? best : null;
}
