import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    exclude: ['test/browser/**'],
    setupFiles: ['test/setup/no-console.ts'],
    testTimeout: 60_000,
  },
});
