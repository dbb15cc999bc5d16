/**
 * Writing an output file so that a reader never sees half of it and an
 * existing file is never lost by accident.
 *
 * The text goes to a temporary file in the target's own folder (same file
 * system, so the final step is a rename, not a copy), is flushed to disk, and
 * only then takes the target's name. Without `force` the final step is
 * `link(2)`, which fails if the name exists, so two writers racing for one
 * name cannot both win and an existing file is left whole; with `force` it is
 * `rename(2)`, which replaces the target in one step (POSIX: a reader sees the
 * old file or the new one, never a mix).
 */
import { randomBytes } from 'node:crypto';
import { link, lstat, open, rename, unlink } from 'node:fs/promises';
import { basename, dirname, join } from 'node:path';
import { type Result, error, fail, ok } from '../issues.js';

export interface WriteFileOptions {
  /** Replace an existing file. Default false: an existing file is an issue (`file_exists`). */
  readonly force?: boolean;
}

function describe(cause: unknown): string {
  const code = (cause as NodeJS.ErrnoException).code;
  if (code === 'ENOENT') return 'its folder does not exist';
  if (code === 'EACCES' || code === 'EPERM') return 'permission denied';
  if (code === 'EISDIR') return 'it is a folder';
  if (code === 'ENOSPC') return 'the disk is full';
  return (cause as Error).message;
}

async function removeQuietly(path: string): Promise<void> {
  try {
    await unlink(path);
  } catch {
    // Already gone, or never made: nothing to clean.
  }
}

/**
 * Write `text` (UTF-8) to `path` atomically: through a temporary file beside
 * it, renamed into place. Refuses to replace an existing file unless
 * `options.force`. Returns issues `file_exists` or `cannot_write` (location:
 * the path), never throws for a file-system failure.
 *
 * Cost: one write of the text, one fsync, one link or rename.
 *
 * @example
 *   const written = await writeFileAtomic('report.html', html, { force: false });
 *   if (!written.ok) reportIssues(written.issues);
 */
export async function writeFileAtomic(path: string, text: string, options: WriteFileOptions = {}): Promise<Result<void>> {
  const force = options.force ?? false;
  const temporary = join(dirname(path), `.${basename(path)}.${process.pid}.${randomBytes(6).toString('hex')}.tmp`);
  const exists = (): Result<void> =>
    fail([error('file_exists', path, 'the output requires a path with no file yet (pass `--force` to replace it), got an existing file')]);
  if (!force) {
    // Early answer for the common case; the link below is what makes it safe.
    try {
      await lstat(path);
      return exists();
    } catch (cause) {
      if ((cause as NodeJS.ErrnoException).code !== 'ENOENT') {
        return fail([error('cannot_write', path, `the output requires a writable path, got ${describe(cause)}`)]);
      }
    }
  }
  try {
    const handle = await open(temporary, 'wx');
    try {
      await handle.writeFile(text, 'utf8');
      await handle.sync();
    } finally {
      await handle.close();
    }
  } catch (cause) {
    await removeQuietly(temporary);
    return fail([error('cannot_write', path, `the output requires a writable folder, got ${describe(cause)}`)]);
  }
  try {
    if (force) {
      await rename(temporary, path);
    } else {
      try {
        await link(temporary, path);
      } catch (cause) {
        const code = (cause as NodeJS.ErrnoException).code;
        if (code === 'EEXIST') {
          await removeQuietly(temporary);
          return exists();
        }
        // File systems without hard links: check, then rename (a narrow race remains there).
        if (code !== 'EPERM' && code !== 'ENOTSUP' && code !== 'EOPNOTSUPP' && code !== 'ENOSYS') throw cause;
        try {
          await lstat(path);
          await removeQuietly(temporary);
          return exists();
        } catch (missing) {
          if ((missing as NodeJS.ErrnoException).code !== 'ENOENT') throw missing;
        }
        await rename(temporary, path);
      }
      await removeQuietly(temporary);
    }
  } catch (cause) {
    await removeQuietly(temporary);
    return fail([error('cannot_write', path, `the output requires a writable path, got ${describe(cause)}`)]);
  }
  return ok(undefined);
}
