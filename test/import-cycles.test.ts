/**
 * No runtime import circle in src/ (DEVELOPERS.md, "Which way the imports
 * run"): the relative imports of every module, read with the TypeScript
 * parser, type-only imports left out (the compiler erases them), and the
 * strongly connected components of that graph by Tarjan's algorithm
 * (Tarjan, R. (1972), Depth-first search and linear graph algorithms, SIAM
 * Journal on Computing 1(2), 146-160). A component of two files or more is a
 * circle.
 */
import { describe, expect, it } from 'vitest';
import { readFileSync, readdirSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';
import ts from 'typescript';
import { ROOT } from './helpers/demo.js';

function sourceFiles(folder: string): string[] {
  return readdirSync(folder).flatMap((name) => {
    const path = join(folder, name);
    if (statSync(path).isDirectory()) return sourceFiles(path);
    return path.endsWith('.ts') ? [path] : [];
  });
}

/** The modules each module imports at run time (relative imports and re-exports, not type-only ones). */
function runtimeImports(files: readonly string[]): Map<string, string[]> {
  const graph = new Map<string, string[]>();
  for (const file of files) {
    const source = ts.createSourceFile(file, readFileSync(file, 'utf8'), ts.ScriptTarget.ES2022, false);
    const targets: string[] = [];
    for (const statement of source.statements) {
      let specifier: ts.Expression | undefined;
      let typeOnly = false;
      if (ts.isImportDeclaration(statement)) {
        specifier = statement.moduleSpecifier;
        const clause = statement.importClause;
        const named = clause?.namedBindings;
        typeOnly =
          clause !== undefined &&
          (clause.isTypeOnly ||
            (clause.name === undefined && named !== undefined && ts.isNamedImports(named) && named.elements.length > 0 && named.elements.every((element) => element.isTypeOnly)));
      } else if (ts.isExportDeclaration(statement) && statement.moduleSpecifier !== undefined) {
        specifier = statement.moduleSpecifier;
        const named = statement.exportClause;
        typeOnly = statement.isTypeOnly || (named !== undefined && ts.isNamedExports(named) && named.elements.every((element) => element.isTypeOnly));
      }
      if (specifier === undefined || !ts.isStringLiteral(specifier) || !specifier.text.startsWith('.') || typeOnly) continue;
      targets.push(resolve(dirname(file), specifier.text.replace(/\.js$/, '.ts')));
    }
    graph.set(file, targets);
  }
  return graph;
}

/** The strongly connected components of two nodes or more (Tarjan 1972). */
function circles(graph: ReadonlyMap<string, readonly string[]>): string[][] {
  let counter = 0;
  const index = new Map<string, number>();
  const lowest = new Map<string, number>();
  const stack: string[] = [];
  const onStack = new Set<string>();
  const found: string[][] = [];
  const connect = (node: string): void => {
    index.set(node, counter);
    lowest.set(node, counter);
    counter += 1;
    stack.push(node);
    onStack.add(node);
    for (const next of graph.get(node) ?? []) {
      if (!graph.has(next)) continue;
      if (!index.has(next)) {
        connect(next);
        lowest.set(node, Math.min(lowest.get(node) as number, lowest.get(next) as number));
      } else if (onStack.has(next)) lowest.set(node, Math.min(lowest.get(node) as number, index.get(next) as number));
    }
    if (lowest.get(node) !== index.get(node)) return;
    const component: string[] = [];
    let member: string;
    do {
      member = stack.pop() as string;
      onStack.delete(member);
      component.push(member);
    } while (member !== node);
    if (component.length > 1) found.push(component.sort());
  };
  for (const node of graph.keys()) if (!index.has(node)) connect(node);
  return found;
}

describe('import circles', () => {
  it('finds the circle of a graph that has one, and none in a chain', () => {
    const circle = new Map([['a', ['b']], ['b', ['c']], ['c', ['a']], ['d', ['a']]]);
    expect(circles(circle)).toEqual([['a', 'b', 'c']]);
    expect(circles(new Map([['a', ['b']], ['b', ['c']], ['c', []]]))).toEqual([]);
  });

  it('src/ has no runtime import circle', () => {
    const files = sourceFiles(join(ROOT, 'src'));
    const found = circles(runtimeImports(files)).map((component) => component.map((file) => relative(ROOT, file)));
    expect(found).toEqual([]);
  });
});
