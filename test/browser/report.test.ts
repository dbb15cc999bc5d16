/**
 * The demo report in a real browser: Debian's headless Chromium driven by
 * playwright-core (executablePath /usr/bin/chromium; no browser download).
 * Run with `npm run test:browser`.
 */
import { existsSync, mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { type Browser, chromium } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { MATCHES, ROOT } from '../helpers/demo.js';

const CHROMIUM = '/usr/bin/chromium';
const OUT = join(ROOT, 'test', 'out');
const REPORT = join(OUT, 'demo-report.html');
const SCREENSHOT = join(OUT, 'demo-report.png');

describe('the demo report in headless Chromium', () => {
  let browser: Browser;
  const consoleErrors: string[] = [];
  const failedRequests: string[] = [];
  const requests: string[] = [];
  let charts: { id: string; svgs: number; marks: number; width: number; height: number }[] = [];

  beforeAll(async () => {
    expect(existsSync(CHROMIUM), `${CHROMIUM} is missing: apt-get install chromium`).toBe(true);
    mkdirSync(OUT, { recursive: true });
    const run = runCli([
      'report',
      '--trials', join(MATCHES, 'playtest-trials.csv'),
      '--model', join(MATCHES, 'model.json'),
      '--lobbies', MATCHES,
      '--rules', join(MATCHES, 'league-rules.json'),
      '--out', REPORT,
      '--force',
    ]);
    expect(run.status, run.stderr).toBe(0);
    browser = await chromium.launch({
      executablePath: CHROMIUM,
      args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
    });
    const page = await browser.newPage({ viewport: { width: 1240, height: 1600 } });
    page.on('console', (message) => {
      if (message.type() === 'error' || message.type() === 'warning') consoleErrors.push(`${message.type()}: ${message.text()}`);
    });
    page.on('pageerror', (error) => consoleErrors.push(`pageerror: ${error.message}`));
    page.on('request', (request) => requests.push(request.url()));
    page.on('requestfailed', (request) => failedRequests.push(`${request.url()}: ${request.failure()?.errorText ?? ''}`));
    const response = await page.goto(pathToFileURL(REPORT).href, { waitUntil: 'load' });
    expect(response?.ok()).toBe(true);
    charts = await page.$$eval('figure.chart', (figures) =>
      figures.map((figure) => {
        const svg = figure.querySelector('svg');
        const box = svg?.getBoundingClientRect();
        return {
          id: figure.id,
          svgs: figure.querySelectorAll(':scope > svg').length,
          marks: svg ? svg.querySelectorAll('g[class*="mark-"] path, g[class*="mark-"] line, g[class*="mark-"] rect, g[class*="mark-"] text').length : 0,
          width: box?.width ?? 0,
          height: box?.height ?? 0,
        };
      }),
    );
    await page.screenshot({ path: SCREENSHOT, fullPage: true });
  });

  afterAll(async () => {
    await browser?.close();
  });

  it('renders every chart as an SVG with marks and a size', () => {
    const lobbies = runCli(['balance', MATCHES, '--model', join(MATCHES, 'model.json'), '--rules', join(MATCHES, 'league-rules.json'), '--json']);
    const balanced = JSON.parse(lobbies.stdout).lobbies.filter((lobby: { status: string }) => lobby.status !== 'rejected').length;
    expect(charts.map((chart) => chart.id)).toEqual([
      'figure-box-latency',
      'figure-box-scale',
      'figure-box-difficulty',
      'figure-curves',
      'figure-calibration',
      ...Array.from({ length: balanced }, (_, index) => `figure-lobby-${index + 1}`),
    ]);
    for (const chart of charts) {
      expect(chart.svgs, chart.id).toBe(1);
      expect(chart.marks, chart.id).toBeGreaterThan(10);
      expect(chart.width, chart.id).toBeGreaterThan(200);
      expect(chart.height, chart.id).toBeGreaterThan(150);
    }
  });

  it('logs no console error or warning', () => {
    expect(consoleErrors).toEqual([]);
  });

  it('makes no request but the page itself, and none fails', () => {
    expect(failedRequests).toEqual([]);
    expect(requests).toEqual([pathToFileURL(REPORT).href]);
  });

  it('saved a screenshot', () => {
    expect(existsSync(SCREENSHOT)).toBe(true);
  });
});
