import { availableParallelism } from 'node:os';
import { describe, expect, it } from 'vitest';
import { FIT_THREADS_CAP, threadCount } from '../../src/cli/thread-count.js';
import type { Issue } from '../../src/issues.js';

describe('threadCount()', () => {
  it('defaults to the processors available, capped for the fitting commands', () => {
    const issues: Issue[] = [];
    expect(threadCount(undefined, issues)).toBe(Math.max(1, availableParallelism()));
    expect(threadCount(undefined, issues, FIT_THREADS_CAP)).toBe(Math.max(1, Math.min(FIT_THREADS_CAP, availableParallelism())));
    expect(threadCount(undefined, issues, 1)).toBe(1);
    expect(issues).toEqual([]);
  });

  it('takes a whole number from 1 to 256 as given, above the cap too', () => {
    const issues: Issue[] = [];
    expect(threadCount('7', issues, FIT_THREADS_CAP)).toBe(7);
    expect(threadCount('256', issues)).toBe(256);
    expect(issues).toEqual([]);
  });

  it('refuses anything else, naming --threads', () => {
    for (const text of ['0', '257', '1.5', 'two', '']) {
      const issues: Issue[] = [];
      threadCount(text, issues);
      expect(issues.map((issue) => [issue.code, issue.location])).toEqual([['invalid_option', '--threads']]);
    }
  });
});
