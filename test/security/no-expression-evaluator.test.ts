/**
 * Nothing crafted gets in: no user-provided string may reach an expression
 * evaluator. mathjs is for its numeric functions only, so its parser entry
 * points (evaluate, parse, compile, Parser) and JavaScript's own (eval,
 * new Function) must not appear in the source.
 */
import { describe, expect, it } from 'vitest';
import { readFileSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { ROOT } from '../helpers/demo.js';

function sourceFiles(folder: string): string[] {
  return readdirSync(folder).flatMap((name) => {
    const path = join(folder, name);
    return statSync(path).isDirectory() ? sourceFiles(path) : name.endsWith('.ts') ? [path] : [];
  });
}

const FORBIDDEN = [
  /\bmath\.(evaluate|parse|compile|parser)\b/,
  /\b(evaluate|compile|parse|parser|Parser)\b[^;\n]*from\s+'mathjs'/,
  /import\s+\{[^}]*\b(evaluate|compile|parser|Parser)\b[^}]*\}\s+from\s+'mathjs'/,
  /\beval\s*\(/,
  /\bnew\s+Function\s*\(/,
];

describe('the library source', () => {
  const files = sourceFiles(join(ROOT, 'src'));

  it(`has source files to scan (${files.length})`, () => {
    expect(files.length).toBeGreaterThan(10);
  });

  it('never uses an expression evaluator', () => {
    const offenders: string[] = [];
    for (const file of files) {
      const text = readFileSync(file, 'utf8');
      for (const pattern of FORBIDDEN) if (pattern.test(text)) offenders.push(`${file}: ${pattern}`);
    }
    expect(offenders).toEqual([]);
  });

  it('imports mathjs only through its numeric functions', () => {
    for (const file of files) {
      const text = readFileSync(file, 'utf8');
      const imports = [...text.matchAll(/import\s+(.+?)\s+from\s+'mathjs'/g)].map((match) => match[1] ?? '');
      for (const clause of imports) expect(clause, file).toMatch(/^\{[^}]*\}$/); // named imports only, no namespace object with a parser
    }
  });
});
