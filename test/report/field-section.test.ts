import { mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { unwrap } from '../../src/issues.js';
import { parseTrialsCsv } from '../../src/formats/trials-csv.js';
import { renderReport } from '../../src/report/render-report.js';
import { fieldBandPoints } from '../../src/report/field-section.js';
import { runCli } from '../helpers/cli.js';
import { MATCHES } from '../helpers/demo.js';
import { fieldFixture } from '../helpers/field-fixtures.js';
import { fixtureModel, fixtureReport } from '../field/reference-fixture.js';

describe('renderReport() with a field check', async () => {
  const field = await fixtureReport('live-rounds.csv');
  const trials = unwrap(parseTrialsCsv(readFileSync(fieldFixture('live-rounds.csv'), 'utf8'), 'live-rounds.csv'));
  const result = await renderReport({ trials, model: fixtureModel(), modelName: 'field-model.json', field });
  if (!result.ok) throw new Error(JSON.stringify(result.issues));
  const { html, charts } = result.value;

  it('adds the section on live play with its chart, table, verdict, recommendation and caution', () => {
    expect(charts.map((chart) => chart.id)).toContain('live');
    expect(html).toContain('<details open id="live-section">');
    expect(html).toContain('id="figure-live"');
    expect(html).toContain('Verdict: Compensation falls short (under-compensates)');
    expect(html).toContain('Is the model still right? Refit');
    expect(html).toContain('A &quot;holds&quot; verdict is about the live data seen');
    expect(html).toContain('<th class="num">observed [95%]</th>');
    expect(result.warnings.filter((issue) => issue.code === 'chart_message')).toEqual([]);
  });

  it('plots each band with rows three times: the model before and after compensation, and observed', () => {
    const points = fieldBandPoints(field);
    const bandsWithRows = field.bands.filter((band) => band.observed !== null).length;
    expect(points).toHaveLength(3 * bandsWithRows);
    const worst = field.bands[field.compensation.worst_band ?? 0];
    const observed = points.find((point) => point.band === worst?.label && point.series === 'observed (as played)');
    expect(observed?.p).toBe(worst?.observed);
    expect(observed?.lower).toBe(worst?.observed_lower);
  });
});

describe('lagparity report --live', () => {
  const base = ['report', '--trials', join(MATCHES, 'playtest-trials.csv'), '--model', join(MATCHES, 'model.json'), '--rules', join(MATCHES, 'league-rules.json')];

  it('writes the report with the live section', () => {
    const out = join(mkdtempSync(join(tmpdir(), 'lagparity-live-')), 'season.html');
    const run = runCli([...base, '--live', join(MATCHES, 'live-telemetry.csv'), '--out', out]);
    expect(run.status).toBe(0);
    expect(run.stdout).toBe(`wrote ${out} (7 charts)\n`);
    expect(readFileSync(out, 'utf8')).toContain('<details open id="live-section">');
  });

  it('writes nothing when the live telemetry does not belong to the model (exit 2)', () => {
    const dir = mkdtempSync(join(tmpdir(), 'lagparity-live-'));
    const telemetry = join(dir, 'one-player.csv');
    writeFileSync(telemetry, 'player,latency_ms,scale,difficulty,hits,attempts\nsolo,40,1.1,standard,10,20\nsolo,50,1.2,standard,11,20\n');
    const out = join(dir, 'season.html');
    const run = runCli([...base, '--live', telemetry, '--out', out]);
    expect(run.status).toBe(2);
    expect(run.stderr.trim()).toBe('one-player.csv:player: error too_few_players: the field check requires at least 2 players for cluster-robust intervals, got 1 ("solo")');
    expect(readdirSync(dir)).toEqual(['one-player.csv']);
  });
});
