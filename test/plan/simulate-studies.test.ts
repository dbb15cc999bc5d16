import { describe, expect, it } from 'vitest';
import { runStudies } from '../../src/plan/run-studies.js';
import { RECORD_LENGTH, readRecord, simulateStudies, studySeed } from '../../src/plan/simulate-studies.js';
import { assembleSizeStudy } from '../../src/plan/size-study.js';
import { preparedSmall } from './helpers.js';

describe('simulateStudies()', () => {
  it('gives each study the same record in any batch (the answer cannot depend on how the work is split)', () => {
    const { simulation } = preparedSmall();
    const whole = simulateStudies(simulation, 6, 2, 0, 30);
    const parts = [simulateStudies(simulation, 6, 2, 0, 7), simulateStudies(simulation, 6, 2, 7, 16), simulateStudies(simulation, 6, 2, 23, 7)];
    const joined = new Float64Array(30 * RECORD_LENGTH);
    let at = 0;
    for (const part of parts) {
      joined.set(part, at);
      at += part.length;
    }
    expect(Array.from(joined)).toEqual(Array.from(whole));
  });

  it('draws different studies for different indices, sizes and seeds', () => {
    expect(new Set([studySeed(1, 6, 2, 0), studySeed(1, 6, 2, 1), studySeed(1, 7, 2, 0), studySeed(1, 6, 3, 0), studySeed(2, 6, 2, 0)]).size).toBe(5);
    expect(Number.isSafeInteger(studySeed(-5, 10_000, 100, 99_999))).toBe(true);
  });

  it('records usable fits, their intervals and the tests (a seeded slice of 100 studies)', () => {
    const { simulation } = preparedSmall();
    const records = simulateStudies(simulation, 12, 2, 0, 100);
    const studies = Array.from({ length: 100 }, (_, index) => readRecord(records, index));
    const usable = studies.filter((study) => study.status === 'usable');
    expect(usable.length).toBeGreaterThan(90);
    for (const study of usable) {
      expect(study.width).toBeGreaterThan(0);
      expect(study.scale).toBeGreaterThan(1);
      expect(study.covered).not.toBeNull();
    }
    for (const study of studies.filter((entry) => entry.status !== 'usable')) expect(study.width).toBeNull();
    // 10 attempts x 12 rounds x 12 players at a 15-point drop per 100 ms: the latency effect is found nearly always.
    expect(studies.filter((study) => study.latencyDetected).length).toBeGreaterThan(90);
  });
});

describe('runStudies()', () => {
  it('puts every batch back in place: batches of 7 give the records of one batch of all', async () => {
    const prepared = preparedSmall();
    const sizes = prepared.sizes.map(({ participants, repetitions }) => ({ participants, repetitions }));
    const one = await runStudies(prepared.simulation, sizes, 40, { threads: 0, batch: 40 });
    let calls = 0;
    const many = await runStudies(prepared.simulation, sizes, 40, { threads: 0, batch: 7, onProgress: () => (calls += 1) });
    expect(many.map((records) => Array.from(records))).toEqual(one.map((records) => Array.from(records)));
    expect(calls).toBe(2 * Math.ceil(40 / 7));
    expect(assembleSizeStudy(prepared, many)).toEqual(assembleSizeStudy(prepared, one));
  });
});
