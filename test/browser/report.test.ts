/**
 * The demo report in a real browser: Debian's headless Chromium driven by
 * playwright-core (executablePath /usr/bin/chromium; no browser download).
 * Run with `npm run test:browser`.
 */
import { existsSync, mkdirSync, readFileSync } from 'node:fs';
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
  /** The page's text as the browser renders it (what a reader sees), charts left out. */
  let text = '';

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
    // The page's own text, without the charts' SVG text (run in the page; a string, as the test has no DOM types).
    text = (await page.evaluate(`(() => {
      const copy = document.body.cloneNode(true);
      for (const svg of copy.querySelectorAll('svg')) svg.remove();
      copy.style.position = 'absolute';
      document.body.append(copy);
      const rendered = copy.innerText;
      copy.remove();
      return rendered;
    })()`)) as string;
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
      'figure-scale-needed',
      ...Array.from({ length: balanced }, (_, index) => `figure-lobby-${index + 1}`),
    ]);
    for (const chart of charts) {
      expect(chart.svgs, chart.id).toBe(1);
      expect(chart.marks, chart.id).toBeGreaterThan(10);
      expect(chart.width, chart.id).toBeGreaterThan(200);
      expect(chart.height, chart.id).toBeGreaterThan(150);
    }
  });

  it('shows, as rendered text, every rule of the league and every lobby with its verdict and reasons', () => {
    const rules = JSON.parse(runCli(['audit', MATCHES, '--model', join(MATCHES, 'model.json'), '--rules', join(MATCHES, 'league-rules.json'), '--json']).stdout) as {
      lobbies: { match_id: string; verdict: string; reasons: { message: string }[] }[];
      summary: { lobbies: number; within_rules: number };
    };
    const league = JSON.parse(readFileSync(join(MATCHES, 'league-rules.json'), 'utf8')) as Record<string, unknown>;
    for (const rule of Object.keys(league).filter((key) => key !== 'format')) expect(text).toMatch(new RegExp(`\\b${rule}\\b`));
    // Rules the league left to their defaults are printed too (the compiled rules in full).
    for (const rule of ['max_scale_ratio', 'assistance_budget', 'target', 'spike_fraction', 'accepted_step_gain']) expect(text).toContain(rule);
    for (const lobby of rules.lobbies) {
      expect(text).toContain(`${lobby.match_id}`);
      expect(text).toMatch(new RegExp(`${lobby.match_id} \\([^)]*\\) — ${lobby.verdict === 'within_rules' ? 'within rules' : 'outside rules'}`));
      for (const reason of lobby.reasons) expect(text).toContain(reason.message);
    }
    expect(text).toContain(`${rules.summary.within_rules} of ${rules.summary.lobbies} within rules`);
    expect(text).not.toMatch(/NaN|undefined|\[object Object\]/);
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
