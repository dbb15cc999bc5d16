/** Reading a JSON input from disk or stdin, with the size limit enforced while reading. */
import { createReadStream } from 'node:fs';
import { basename } from 'node:path';
import type { Readable } from 'node:stream';
import { type Result, error, fail, ok } from '../issues.js';
import { MAX_JSON_BYTES, parseJsonText } from '../formats/json-input.js';
import { withLines } from './issue-lines.js';
import { type ForeignEncoding, decodeUtf8, foreignEncoding, foreignEncodingMessage, invalidUtf8Message } from '../formats/text-encoding.js';

type Read = { text: string } | { tooLarge: number } | { encoding: ForeignEncoding } | { invalid: { line: number; message: string } };

async function readLimited(stream: Readable, maxBytes: number): Promise<Read> {
  const chunks: Buffer[] = [];
  let total = 0;
  for await (const chunk of stream) {
    const buffer = typeof chunk === 'string' ? Buffer.from(chunk) : (chunk as Buffer);
    total += buffer.length;
    if (total > maxBytes) {
      stream.destroy();
      return { tooLarge: total };
    }
    chunks.push(buffer);
  }
  const bytes = Buffer.concat(chunks);
  const encoding = foreignEncoding(bytes);
  if (encoding !== null) return { encoding };
  const decoded = decodeUtf8(bytes);
  return 'text' in decoded ? decoded : { invalid: invalidUtf8Message(bytes, decoded.invalidAt) };
}

/**
 * Read a text file whole (`-` reads standard input), at most `maxBytes`.
 * Issues name the file by its base name, or `stdin`.
 */
export async function readTextFile(path: string, maxBytes: number, kind = 'the input'): Promise<Result<string> & { file: string }> {
  const file = path === '-' ? 'stdin' : basename(path);
  let read: Awaited<ReturnType<typeof readLimited>>;
  try {
    read = await readLimited(path === '-' ? process.stdin : createReadStream(path), maxBytes);
  } catch (cause) {
    const code = (cause as NodeJS.ErrnoException).code;
    const reason = code === 'ENOENT' ? 'no such file' : code === 'EISDIR' ? 'it is a folder' : (cause as Error).message;
    return { ...fail([error('cannot_read', path, `${kind} requires a readable file, got ${reason}`)]), file };
  }
  if ('tooLarge' in read) {
    return { ...fail([error('too_large', file, `${kind} requires at most ${maxBytes} bytes (the documented limit), got more than that`)]), file };
  }
  if ('encoding' in read) return { ...fail([error('wrong_encoding', file, foreignEncodingMessage(read.encoding))]), file };
  if ('invalid' in read) return { ...fail([error('wrong_encoding', `${file}:${read.invalid.line}`, read.invalid.message)]), file };
  return { ...ok(read.text), file };
}

/**
 * Read and parse a JSON file (`-` reads standard input). Issues name the file
 * by its base name, or `stdin`.
 */
export async function readJsonFile(path: string, maxBytes: number = MAX_JSON_BYTES): Promise<Result<unknown> & { file: string; text?: string }> {
  const read = await readTextFile(path, maxBytes, 'a JSON input');
  if (!read.ok) return read;
  return { ...parseJsonText(read.value, read.file, maxBytes), file: read.file, text: read.value };
}

/**
 * Read a JSON file and check it with `check` (safeParseLobby, compileRules,
 * ...): the issues and warnings of the check carry the line of the field
 * they name (issue-lines.ts).
 */
export async function readJsonDocument<T>(path: string, check: (value: unknown, file: string) => Result<T>): Promise<Result<T> & { file: string }> {
  const read = await readJsonFile(path);
  if (!read.ok) return read;
  const checked = check(read.value, read.file);
  const text = read.text ?? '';
  if (!checked.ok) return { ...fail(withLines(checked.issues, text, read.file)), file: read.file };
  return { ...ok(checked.value, withLines(checked.warnings, text, read.file)), file: read.file };
}
