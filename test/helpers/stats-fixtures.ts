/**
 * Reading test/fixtures/stats/boxplot_stats_r.csv (R 4.2.2 boxplot.stats(x),
 * fivenum(x), IQR(x); see test/fixtures/stats/README.md), shared by the box
 * statistics and the summary tests.
 */
import { readFileSync } from 'node:fs';

export interface BoxplotReference {
  readonly values: number[];
  readonly quantities: Map<string, string>;
}

/** The reference vectors by name, in file order. */
export function readBoxplotReferences(): Map<string, BoxplotReference> {
  const references = new Map<string, BoxplotReference>();
  for (const line of readFileSync(new URL('../fixtures/stats/boxplot_stats_r.csv', import.meta.url), 'utf8').trim().split('\n').slice(1)) {
    const [vector = '', values = '', quantity = '', value = ''] = line.split(',');
    const reference = references.get(vector) ?? { values: values.split(' ').map(Number), quantities: new Map<string, string>() };
    reference.quantities.set(quantity, value);
    references.set(vector, reference);
  }
  return references;
}

/** One numeric quantity of a reference; throws if the fixture lacks it. */
export function numberOf(reference: BoxplotReference, quantity: string): number {
  const text = reference.quantities.get(quantity);
  if (text === undefined) throw new Error(`fixture has no ${quantity}`);
  return Number(text);
}

/** A space-separated list quantity of a reference (empty when absent). */
export function listOf(reference: BoxplotReference, quantity: string): number[] {
  const text = reference.quantities.get(quantity) ?? '';
  return text === '' ? [] : text.split(' ').map(Number);
}
