/** Small HTML helpers for the report: escaping, tables, numbers. */
import { escapeControlCharacters } from '../formats/control-characters.js';

const ENTITIES: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };

/** Escape text for HTML content and attribute values; invisible controls and reordering marks are shown as `\uXXXX`. */
export function escapeHtml(text: string): string {
  return escapeControlCharacters(text).replace(/[&<>"']/g, (character) => ENTITIES[character] ?? character);
}

/** A number for people: fixed digits, no "-0.000", a dash for nothing. */
export function formatNumber(value: number | null | undefined, digits = 3): string {
  if (value === null || value === undefined || Number.isNaN(value)) return '–';
  if (!Number.isFinite(value)) return value > 0 ? '∞' : '−∞';
  const text = value.toFixed(digits);
  return Number(text) === 0 ? (0).toFixed(digits) : text;
}

/** A number in general format: 4 significant digits, scientific when small or large. */
export function formatGeneral(value: number): string {
  if (value === 0) return '0';
  const magnitude = Math.abs(value);
  if (magnitude >= 1e-3 && magnitude < 1e6) return String(Number(value.toPrecision(4)));
  return value.toExponential(3);
}

export interface TableOptions {
  /** Column indices to right-align (numbers). */
  readonly numeric?: readonly number[];
  readonly caption?: string;
  readonly className?: string;
}

/** An HTML table; every cell is escaped text. */
export function htmlTable(head: readonly string[], rows: readonly (readonly string[])[], options: TableOptions = {}): string {
  const numeric = new Set(options.numeric ?? []);
  const cell = (tag: 'th' | 'td', text: string, index: number) => `<${tag}${numeric.has(index) ? ' class="num"' : ''}>${escapeHtml(text)}</${tag}>`;
  return [
    `<table${options.className ? ` class="${escapeHtml(options.className)}"` : ''}>`,
    options.caption ? `<caption>${escapeHtml(options.caption)}</caption>` : '',
    `<thead><tr>${head.map((text, index) => cell('th', text, index)).join('')}</tr></thead>`,
    `<tbody>${rows.map((row) => `<tr>${row.map((text, index) => cell('td', text, index)).join('')}</tr>`).join('')}</tbody>`,
    '</table>',
  ].join('');
}
