/** Reading a JSON input from disk or stdin, with the size limit enforced while reading. */
import { createReadStream } from 'node:fs';
import { basename } from 'node:path';
import type { Readable } from 'node:stream';
import { type Result, error, fail, ok } from '../issues.js';
import { MAX_JSON_BYTES, parseJsonText } from '../formats/json-input.js';

async function readLimited(stream: Readable, maxBytes: number): Promise<{ text: string } | { tooLarge: number }> {
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
  return { text: Buffer.concat(chunks).toString('utf8') };
}

/**
 * Read a text file whole (`-` reads standard input), at most `maxBytes`.
 * Issues name the file by its base name, or `stdin`.
 */
export async function readTextFile(path: string, maxBytes: number, kind = 'the input'): Promise<Result<string> & { file: string }> {
  const file = path === '-' ? 'stdin' : basename(path);
  let read: { text: string } | { tooLarge: number };
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
  return { ...ok(read.text), file };
}

/**
 * Read and parse a JSON file (`-` reads standard input). Issues name the file
 * by its base name, or `stdin`.
 */
export async function readJsonFile(path: string, maxBytes: number = MAX_JSON_BYTES): Promise<Result<unknown> & { file: string }> {
  const read = await readTextFile(path, maxBytes, 'a JSON input');
  if (!read.ok) return read;
  return { ...parseJsonText(read.value, read.file, maxBytes), file: read.file };
}
