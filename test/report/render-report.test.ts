import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { unwrap } from '../../src/issues.js';
import { parseLobby } from '../../src/formats/lobby.js';
import { parseTrialsCsv } from '../../src/formats/trials-csv.js';
import { compileModel } from '../../src/model/compile.js';
import { compileRules } from '../../src/solver/rules.js';
import { auditLobbies } from '../../src/audit/audit-lobbies.js';
import { type ReportInput, REPORT_CAUTIONS, renderReport } from '../../src/report/render-report.js';
import { MATCHES, readJson } from '../helpers/demo.js';

const trials = unwrap(parseTrialsCsv(readFileSync(join(MATCHES, 'playtest-trials.csv'), 'utf8'), 'playtest-trials.csv'));
// The labelled ground truth (zero covariance, no fit block): stable, unlike model.json, which a fit replaces.
const modelDocument = readJson(join(MATCHES, 'ground-truth.model.json')) as { coefficients: { covariance: number[][]; covariance_kind: string } };
const model = unwrap(compileModel(modelDocument, 'model.json'));
const rules = unwrap(compileRules(readJson(join(MATCHES, 'league-rules.json')), 'league-rules.json'));
const lobbyNames = readdirSync(MATCHES).filter((name) => name.endsWith('.lobby.json')).sort();
const lobbies = lobbyNames.map((name) => ({ name, lobby: parseLobby(readJson(join(MATCHES, name)), name) }));

/** The demo model with a small diagonal covariance, so that it has a band. */
function modelWithCovariance() {
  const size = modelDocument.coefficients.covariance.length;
  const covariance = Array.from({ length: size }, (_, row) => Array.from({ length: size }, (_, column) => (row === column ? (row === 1 ? 1e-8 : 1e-3) : 0)));
  return unwrap(compileModel({ ...modelDocument, coefficients: { ...modelDocument.coefficients, covariance, covariance_kind: 'model' } }, 'model.json'));
}

async function html(input: Partial<ReportInput> = {}) {
  const result = await renderReport({ trials, model, modelName: 'ground-truth.model.json', lobbies, rules, rulesName: 'league-rules.json', ...input });
  if (!result.ok) throw new Error(JSON.stringify(result.issues));
  return { ...result.value, warnings: result.warnings };
}

describe('renderReport() on the demo', async () => {
  const report = await html();

  it('has one SVG per chart: three box plots, the curves, the calibration and one per lobby', () => {
    expect(report.warnings.filter((issue) => issue.code === 'lobby_rejected')).toEqual([]);
    expect(report.charts.map((chart) => chart.id)).toEqual(['box-latency', 'box-scale', 'box-difficulty', 'curves', 'calibration', ...lobbies.map((_, index) => `lobby-${index + 1}`), 'scale-needed']);
    expect(report.html.match(/<svg[\s>]/g)).toHaveLength(6 + lobbies.length);
    for (const chart of report.charts) expect(report.html).toContain(`id="figure-${chart.id}"`);
  });

  it('is self-contained: no scripts, no stylesheets or fonts from outside, no http(s) in src, href or url()', () => {
    expect(report.html).not.toMatch(/<script/i);
    expect(report.html).not.toMatch(/<link\b/i);
    expect(report.html).not.toMatch(/@import|@font-face/i);
    expect(report.html).not.toMatch(/\b(?:src|href|xlink:href|action|poster|data)\s*=\s*["']?\s*(?:https?:)?\/\//i);
    expect(report.html).not.toMatch(/url\(\s*["']?\s*(?:https?:)?\/\//i);
    // The only URIs left are the inert SVG namespace declarations.
    const uris = [...report.html.matchAll(/https?:\/\/[^\s"'<>)]+/g)].map((match) => match[0]);
    expect(new Set(uris)).toEqual(new Set(['http://www.w3.org/2000/svg', 'http://www.w3.org/1999/xlink']));
    for (const match of report.html.matchAll(/(\S+)=["']https?:\/\//g)) expect(['xmlns', 'xmlns:xlink']).toContain(match[1]);
    expect(report.html).toContain("Content-Security-Policy\" content=\"default-src 'none'");
  });

  it('renders every chart without a Vega message', () => {
    expect(report.warnings.filter((issue) => issue.code === 'chart_message')).toEqual([]);
  });

  it('has marks in every chart', () => {
    const svgs = [...report.html.matchAll(/<svg[\s\S]*?<\/svg>/g)].map((match) => match[0]);
    for (const svg of svgs) expect(svg).toMatch(/class="mark-(symbol|line|rect|rule|area)/);
    expect(svgs[3]).toContain('Latency (ms)');
    expect(svgs[3]).toContain('Compensation scale (×)');
    expect(svgs[4]).toContain('perfect calibration (y = x)');
  });

  it('states the cautions, the coefficients, that there is no fit block and no band', () => {
    for (const caution of REPORT_CAUTIONS) expect(report.html).toContain(caution.replace(/'/g, '&#39;'));
    expect(report.html).toContain('latency_x_log_scale');
    expect(report.html).toContain('has no <code>fit</code> block');
    expect(report.html).toContain('No band is drawn');
    expect(report.html).not.toContain('class="mark-area');
  });

  it('marks the players a cap holds back', () => {
    expect(report.html).toContain('Held back by a rule, still short of the target: driftmoor (cap');
    expect(report.html).toContain('held below the target by the cap');
    // The legend names the soft cap where it binds (the open free-for-all has soft-capped players).
    expect(report.html).toMatch(/held below the target by the soft cap/);
  });

  it('carries the audit: each lobby within or outside rules with every reason, as auditLobbies judges it', () => {
    const audit = auditLobbies(lobbies.map(({ name, lobby }) => ({ lobby, source: name })), model, rules);
    for (const lobby of audit.lobbies) {
      const heading = new RegExp(`<h3 id="lobby-\\d+">${lobby.match_id} <span class="note">\\(${lobby.source.replace(/\./g, '\\.')}\\)</span> — <span class="${lobby.verdict === 'within_rules' ? 'within">within rules' : 'outside">outside rules'}</span>`);
      expect(report.html).toMatch(heading);
      for (const reason of lobby.reasons) expect(report.html).toContain(reason.message.replace(/"/g, '&quot;').replace(/'/g, '&#39;'));
    }
    expect(report.html).toContain(`${audit.summary.within_rules} of ${audit.summary.lobbies} within rules`);
    expect(report.html).toMatch(/Worst residual gap after compensation: <strong>0\.\d{3}<\/strong>/);
  });

  it('prints every rule of the compiled rules, the soft cap and the estimator among them', () => {
    for (const [key, value] of Object.entries(rules)) {
      if (key === 'format') continue;
      expect(report.html).toContain(`<td>${key}</td>`);
      if (typeof value === 'number') expect(report.html).toMatch(new RegExp(`<td>${key}</td><td>${String(Number(value.toPrecision(4))).replace('.', '\\.')}</td>`));
    }
    expect(report.html).toMatch(/<td>soft_cap<\/td><td>above 1\.35, fraction 0\.5<\/td>/);
    expect(report.html).toMatch(/<td>latency_estimator<\/td><td>percentile 10<\/td>/);
  });

  it('draws every lobby on one y-axis, and the scale each latency needs with the floor, soft cap, cap and limit', () => {
    const axes = [...report.html.matchAll(/<figure id="figure-lobby-\d+"[\s\S]*?aria-label="(Y-axis[^"]*)"/g)].map((match) => match[1]);
    expect(axes).toHaveLength(lobbies.length);
    expect(new Set(axes).size).toBe(1);
    const needed = report.html.slice(report.html.indexOf('id="figure-scale-needed"'));
    for (const label of ['floor 1', 'soft cap from 1.35', 'cap 1.5', 'latency limit 220 ms']) expect(needed).toContain(label);
  });

  it('has a headline, a table of contents of folding sections, and names no other software in its text', () => {
    expect(report.html).toMatch(/<section class="headline" id="headline">\n<p>Fitted: a binomial logit model/);
    for (const id of ['data', 'model', 'scale-needed-section', 'lobbies', 'method']) {
      expect(report.html).toContain(`<a href="#${id}">`);
      expect(report.html).toContain(`<details open id="${id}">`);
    }
    const text = report.html.replace(/<svg[\s\S]*?<\/svg>/g, '');
    expect(text).not.toMatch(/\bR's\b|boxplot\.stats|fivenum|statsmodels|\bglm\(/);
    expect(text).not.toMatch(/NaN/);
  });

  it('is the same page on every call', async () => {
    expect((await html()).html).toBe(report.html);
  });
});

describe('renderReport() options', () => {
  it('draws the 95% band when the model has a covariance', async () => {
    const report = await html({ model: modelWithCovariance(), lobbies: [] });
    expect(report.html).toContain('class="mark-area');
    expect(report.html).toContain('delta method on the linear predictor');
    expect(report.html.match(/<svg[\s>]/g)).toHaveLength(6);
  });

  it('renders the model file\'s fit block, whatever it holds', async () => {
    const fitted = unwrap(compileModel({ ...modelDocument, fit: { deviance: 3312.5, converged: true, iterations: 5, information_criteria: { aic: 3324.1 } } }, 'model.json'));
    const report = await html({ model: fitted, lobbies: [] });
    // Fields this report does not know are shown as written, folded away.
    expect(report.html).toContain('<dt>deviance</dt><dd><code>3312.5</code></dd>');
    expect(report.html).toContain('<dt>information_criteria</dt><dd><code>{&quot;aic&quot;:3324.1}</code></dd>');
  });

  it('says when the model was fitted on other data', async () => {
    const report = await html({ lobbies: [], trialsSha256: 'f'.repeat(64) });
    expect(report.warnings.map((issue) => issue.code)).toContain('other_data');
    expect(report.html).toContain('the model was fitted on playtest-trials.csv');
  });

  it('escapes text from the inputs', async () => {
    const lobby = parseLobby({ format: 'lagparity/lobby@1', match_id: '<b>m&m</b>', attribute: 'hit_area', difficulty: 'veteran', players: [{ id: '<script>x</script>', latency_ms: 40 }, { id: 'b', latency_ms: 90 }] }, 'x.lobby.json');
    const report = await html({ lobbies: [{ name: 'x.lobby.json', lobby }] });
    expect(report.html).not.toContain('<script>');
    expect(report.html).toContain('&lt;b&gt;m&amp;m&lt;/b&gt;');
  });

  it('refuses trials whose difficulty the model does not know', async () => {
    const other = unwrap(parseTrialsCsv('latency_ms,scale,difficulty,hits,attempts\n40,1,nightmare,3,10\n', 'other.csv'));
    const result = await renderReport({ trials: other, model });
    expect(result.ok ? [] : result.issues.map((issue) => [issue.code, issue.location])).toEqual([['wrong_difficulty', 'other.csv:difficulty']]);
  });
});
