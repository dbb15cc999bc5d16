/** The CLI's one table style: no colour codes, box lines without a rule between body rows. */
import Table from 'cli-table3';

/** Box lines without a rule between body rows. */
export const COMPACT_CHARS = { mid: '', 'left-mid': '', 'mid-mid': '', 'right-mid': '' };

export type Alignment = 'left' | 'right';

/** A plain compact table with these column heads and alignments. */
export function compactTable(head: readonly string[], alignments: readonly Alignment[]): Table.Table {
  return new Table({ head: [...head], style: { head: [], border: [] }, chars: COMPACT_CHARS, colAligns: [...alignments] });
}
