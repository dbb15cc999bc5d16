import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    exclude: ['test/browser/**'],
    setupFiles: ['test/setup/no-console.ts'],
    globalSetup: ['test/setup/build.ts'],
    testTimeout: 60_000,
  },
});
