/**
 * The line of each field an issue names, added to its message, so that a
 * person can go straight to it in the file: `rules.json:latency_limt_ms:
 * ... (line 7)`. The JSON text is parsed into a tree (jsonc-parser) only when
 * a document has issues; nesting is already limited (json-structure.ts).
 */
import { type Node, findNodeAtLocation, parseTree } from 'jsonc-parser';
import type { Issue } from '../issues.js';
import { lineAndColumn } from '../formats/json-input.js';

/** `players[3].latency_ms` -> ['players', 3, 'latency_ms']. */
function segments(path: string): (string | number)[] {
  const out: (string | number)[] = [];
  for (const match of path.matchAll(/\[(\d+)\]|([^.[\]]+)/g)) out.push(match[1] !== undefined ? Number(match[1]) : (match[2] as string));
  return out;
}

/** The node of the field itself: for a property, its key (where a person looks). */
function fieldNode(tree: Node, path: (string | number)[]): Node | undefined {
  if (path.length === 0) return undefined;
  const parent = findNodeAtLocation(tree, path.slice(0, -1));
  const last = path[path.length - 1];
  if (parent?.type === 'object' && typeof last === 'string') {
    const property = parent.children?.find((child) => child.children?.[0]?.value === last);
    if (property !== undefined) return property;
  }
  return findNodeAtLocation(tree, path) ?? parent;
}

/** Issues located at `file:path` get " (line N)" on their message; others pass unchanged. */
export function withLines(issues: readonly Issue[], text: string, file: string): Issue[] {
  let tree: Node | undefined | null = null;
  return issues.map((issue) => {
    if (!issue.location.startsWith(`${file}:`)) return issue;
    const path = issue.location.slice(file.length + 1);
    if (/^\d+(:\d+)?$/.test(path)) return issue;
    tree ??= parseTree(text) ?? undefined;
    const node = tree === undefined ? undefined : fieldNode(tree, segments(path));
    if (node === undefined) return issue;
    return { ...issue, message: `${issue.message} (line ${lineAndColumn(text, node.offset).line})` };
  });
}
