/**
 * Writes docs/report-screenshot.png: the demo report (matches/) rendered by
 * the library, opened in Debian's headless Chromium through playwright-core
 * (no browser download), and photographed from the top.
 *
 * Run: npx tsx tools/render-report-screenshot.ts [out.png] [--full]
 * Needs /usr/bin/chromium (apt-get install chromium).
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium } from 'playwright-core';
import { buildDemoReport } from '../test/browser/demo-report.js';

const out = process.argv.slice(2).find((argument) => !argument.startsWith('--')) ?? 'docs/report-screenshot.png';
const full = process.argv.includes('--full');
const html = await buildDemoReport();
const path = join(mkdtempSync(join(tmpdir(), 'lagparity-report-')), 'report.html');
writeFileSync(path, html);
const browser = await chromium.launch({
  executablePath: '/usr/bin/chromium',
  args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
});
try {
  // A tall viewport at a reduced scale: the cautions, the box plots and the fitted curves in one picture.
  const page = await browser.newPage({ viewport: { width: 1240, height: 2900 }, deviceScaleFactor: full ? 1 : 0.62 });
  await page.goto(pathToFileURL(path).href);
  await page.screenshot({ path: out, fullPage: full });
  console.log(`wrote ${out}`);
} finally {
  await browser.close();
}
