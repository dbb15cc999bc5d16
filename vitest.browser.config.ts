import { defineConfig } from 'vitest/config';

// The browser test: `npm run test:browser`. Needs Debian's Chromium at /usr/bin/chromium
// (apt-get install chromium); playwright-core drives it and never downloads a browser.
// Kept out of `npm test` (vitest.config.ts excludes test/browser/**) so that the main suite
// runs on a machine with only Node.
export default defineConfig({
  test: {
    include: ['test/browser/**/*.test.ts'],
    setupFiles: ['test/setup/no-console.ts'],
    globalSetup: ['test/setup/build.ts'],
    testTimeout: 120_000,
    hookTimeout: 120_000,
  },
});
