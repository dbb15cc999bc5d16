/**
 * Text from a file (an id, a team, a file name) can carry characters a
 * terminal obeys instead of showing: ESC and the other C0 controls, DEL, the
 * C1 controls (U+0080-U+009F; U+009B is a one-character CSI in some
 * terminals), and the invisible marks that reorder or hide text (U+200E,
 * U+200F, U+202A-U+202E, U+2066-U+2069; "Trojan Source", Boucher and
 * Anderson 2021), and the line and paragraph separators U+2028, U+2029.
 * Everything lagparity prints goes through `escapeControlCharacters`, which
 * writes each such character as its JSON escape `\uXXXX`: readable on a
 * terminal, and in JSON output the same string it stood for. Tab and line
 * feed are layout and stay.
 */
// eslint-disable-next-line no-control-regex -- matching control characters is the point
const CONTROL = /[\u0000-\u0008\u000b-\u001f\u007f-\u009f\u200e\u200f\u2028\u2029\u202a-\u202e\u2066-\u2069]/g;

export function escapeControlCharacters(text: string): string {
  CONTROL.lastIndex = 0;
  if (!CONTROL.test(text)) return text;
  CONTROL.lastIndex = 0;
  return text.replace(CONTROL, (character) => `\\u${character.charCodeAt(0).toString(16).padStart(4, '0')}`);
}
