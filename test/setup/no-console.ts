// Guard the guardrails: a library module must never write to the console.
// Any console call during a test fails that test. CLI tests spawn a child
// process, so they are unaffected.
import { afterEach, beforeEach, vi } from 'vitest';

const methods = ['log', 'info', 'warn', 'error', 'debug'] as const;

beforeEach(() => {
  for (const method of methods) {
    vi.spyOn(console, method).mockImplementation((...args: unknown[]) => {
      throw new Error(`console.${method} called during a test: ${args.map(String).join(' ')}`);
    });
  }
});

afterEach(() => {
  vi.restoreAllMocks();
});
