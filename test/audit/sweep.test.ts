import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { parseSweep, sweepRule } from '../../src/audit/sweep.js';
import { auditLobbies } from '../../src/audit/audit-lobbies.js';
import { compileModel } from '../../src/model/compile.js';
import { defaultRules } from '../../src/solver/rules.js';
import { parseLobby } from '../../src/formats/lobby.js';
import { MATCHES, readJson } from '../helpers/demo.js';

describe('parseSweep()', () => {
  it('reads an inclusive range and a list', () => {
    expect(parseSweep('scale_cap=1.2:2.0:0.1')).toMatchObject({ ok: true, value: { rule: 'scale_cap', values: [1.2, 1.3, 1.4, 1.5, 1.6, 1.7, 1.8, 1.9, 2] } });
    expect(parseSweep('accepted_gap=0.01,0.02')).toMatchObject({ ok: true, value: { values: [0.01, 0.02] } });
  });

  it.each(['scale_cap', 'colour=1:2:0.5', 'scale_cap=2:1:0.1', 'scale_cap=1:2:0', 'scale_cap=1:2', 'scale_cap=a,b', 'scale_cap=0:1000:0.001'])('refuses %j with a reason', (text) => {
    const result = parseSweep(text);
    expect(result.ok).toBe(false);
    if (!result.ok) expect(result.issues[0]).toMatchObject({ code: 'invalid_sweep', location: '--sweep' });
  });
});

describe('sweepRule()', () => {
  const compiled = compileModel(readJson(join(MATCHES, 'ground-truth.model.json')));
  if (!compiled.ok) throw new Error('model');
  const entries = [40, 120, 180].map((far, index) => ({
    lobby: { ...parseLobby({ format: 'lagparity/lobby@1', match_id: `m${index}`, attribute: 'hit_area', difficulty: 'standard', players: [{ id: 'a', latency_ms: 15 }, { id: 'b', latency_ms: far }] }) },
    source: `m${index}`,
  }));

  it('matches a separate audit at every value, and the share passing never falls as the cap rises', () => {
    const rules = defaultRules();
    const report = sweepRule(entries, compiled.value, rules, { rule: 'scale_cap', values: [1.1, 1.3, 1.6, 2.5] });
    let previous = -1;
    for (const row of report.rows) {
      const direct = auditLobbies(entries, compiled.value, defaultRules({ scale_cap: row.value }));
      expect(row.within_rules).toBe(direct.summary.within_rules);
      expect(row.failing_rules).toEqual(Object.fromEntries(Object.entries(direct.summary.failing_rules).filter(([, count]) => count > 0)));
      expect(row.most_binding).toBe(direct.summary.most_binding);
      expect(row.share_within_rules ?? -1).toBeGreaterThanOrEqual(previous);
      previous = row.share_within_rules ?? -1;
    }
    expect(report.rows[0]?.within_rules).toBeLessThan(report.rows[3]?.within_rules ?? 0);
    // The smallest swept value at which every lobby is within rules, from the rows themselves.
    const passing = report.rows.filter((row) => row.within_rules === row.lobbies).map((row) => row.value);
    expect(report.smallest_value_within_rules).toBe(passing.length === 0 ? null : Math.min(...passing));
  });

  it('marks a value that makes the rules contradict themselves', () => {
    const report = sweepRule(entries, compiled.value, defaultRules(), { rule: 'scale_cap', values: [0.8, 1.5] });
    expect(report.rows[0]).toMatchObject({ valid: false, share_within_rules: null });
    expect(report.rows[0]?.issues[0]).toMatch(/cap >= `scale_floor`/);
    expect(report.rows[1]?.valid).toBe(true);
  });

  it('counts the players a latency limit excludes, so a gap bought by exclusion shows', () => {
    const report = sweepRule(entries, compiled.value, defaultRules({ scale_cap: 3 }), { rule: 'latency_limit_ms', values: [100, 150, 250] });
    expect(report.rows.map((row) => row.excluded_players)).toEqual([2, 1, 0]); // players at 120 and 180 ms, then 180, then none
    expect(report.rows[0]?.failing_rules.latency_limit_ms).toBe(2);
  });
});
