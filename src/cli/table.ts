/** The CLI's one table style: no colour codes, box lines without a rule between body rows. */
import Table from 'cli-table3';
import { escapeControlCharacters } from '../formats/control-characters.js';

/** Box lines without a rule between body rows. */
export const COMPACT_CHARS = { mid: '', 'left-mid': '', 'mid-mid': '', 'right-mid': '' };

export type Alignment = 'left' | 'right';

type Cell = Table.Cell;

/**
 * A cell's text with control characters escaped before the table measures it: cli-table3 reads
 * an ESC in a cell as a colour code, leaves it out of the width and appends a reset of its own
 * (an id with ESC[31m printed as ESC[31m...ESC[39m, which the output's escaping then showed).
 */
function escapedCell(cell: Cell): Cell {
  if (typeof cell === 'string') return escapeControlCharacters(cell);
  if (cell !== null && typeof cell === 'object' && 'content' in cell && typeof cell.content === 'string') return { ...cell, content: escapeControlCharacters(cell.content) };
  return cell;
}

/** A plain compact table with these column heads and alignments; every cell's text is escaped as it is pushed. */
export function compactTable(head: readonly string[], alignments: readonly Alignment[]): Table.Table {
  const table = new Table({ head: head.map(escapeControlCharacters), style: { head: [], border: [] }, chars: COMPACT_CHARS, colAligns: [...alignments] });
  const push = table.push.bind(table);
  table.push = (...rows: Table.Table[number][]) => push(...rows.map((row) => (Array.isArray(row) ? row.map(escapedCell) : row)));
  return table;
}
