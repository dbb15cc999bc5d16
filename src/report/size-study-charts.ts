/**
 * The size study's charts as Vega-Lite specs (see charts.ts): the precision
 * of the compensation scale against the number of participants, and the power
 * to detect the latency and scale effects, each with its Monte Carlo error and
 * the goal.
 */
import type { TopLevelSpec } from 'vega-lite';
import type { SizeRow } from '../plan/size-study-types.js';
import { CHART_CONFIG } from './charts.js';
import { CATEGORY_COLOURS, OKABE_ITO } from './palette.js';

const GOAL = 'goal';

/** One point of a series: a value at a number of participants with its Monte Carlo interval. */
interface SeriesPoint {
  readonly participants: number;
  readonly value: number;
  readonly low: number;
  readonly high: number;
  readonly series: string;
}

function seriesName(name: string, repetitions: number, several: boolean): string {
  return several ? `${name}, ${repetitions} repetition(s)` : name;
}

/** Lines with points and Monte Carlo error bars against participants, one colour and dash per series, and the goal as a labelled dashed black line. */
function againstParticipants(title: string, yAxis: { title: string; scale: object }, points: readonly SeriesPoint[], goal: number | null): TopLevelSpec {
  const names = [...new Set(points.map((point) => point.series))];
  const colour = { domain: names, range: CATEGORY_COLOURS.slice(0, names.length) };
  const widest = Math.max(...points.map((point) => point.participants));
  const x = { field: 'participants', type: 'quantitative' as const, title: 'Participants', scale: { zero: false } };
  const y = { type: 'quantitative' as const, ...yAxis };
  const legend = { title: null, orient: 'bottom' as const, direction: 'vertical' as const };
  // Colour and dash both tell the series apart, in one legend (same field, same domain).
  const bySeries = { field: 'series', type: 'nominal' as const, scale: colour, legend };
  const byDash = { field: 'series', type: 'nominal' as const, scale: { domain: names }, legend };
  return {
    config: CHART_CONFIG,
    title,
    width: 420,
    height: 280,
    layer: [
      { data: { values: [...points] }, mark: { type: 'rule' as const, strokeWidth: 1.5 }, encoding: { x, y: { ...y, field: 'low' }, y2: { field: 'high' }, color: bySeries } },
      {
        data: { values: [...points] },
        mark: { type: 'line' as const, point: { filled: true, size: 50 }, strokeWidth: 2 },
        encoding: { x, y: { ...y, field: 'value' }, color: bySeries, strokeDash: byDash },
      },
      ...(goal === null
        ? []
        : [
            { data: { values: [{ goal }] }, mark: { type: 'rule' as const, color: OKABE_ITO.black, strokeDash: [6, 3], strokeWidth: 1.5 }, encoding: { y: { ...y, field: 'goal' } } },
            {
              data: { values: [{ goal, participants: widest, label: `${GOAL} ${goal}` }] },
              mark: { type: 'text' as const, align: 'right' as const, baseline: 'bottom' as const, dy: -3, fontSize: 11, color: OKABE_ITO.black },
              encoding: { x, y: { ...y, field: 'goal' }, text: { field: 'label' } },
            },
          ]),
    ],
  } satisfies TopLevelSpec;
}

/**
 * Width of the scale's 90% interval against participants: the median and the
 * 90th percentile over the simulated studies, with their 95% Monte Carlo
 * intervals, and the goal. Sizes whose quantile is unbounded (too many
 * unusable fits) are left out.
 */
export function precisionSpec(rows: readonly SizeRow[], goalWidth: number | null, atLatency: number): TopLevelSpec {
  const several = new Set(rows.map((row) => row.repetitions)).size > 1;
  const points = rows.flatMap((row) =>
    (
      [
        ['median', row.width_median],
        ['90th percentile', row.width_p90],
      ] as const
    ).flatMap(([statistic, width]) =>
      width.estimate === null ? [] : [{ participants: row.participants, value: width.estimate, low: width.mc_low ?? width.estimate, high: width.mc_high ?? width.estimate, series: seriesName(statistic, row.repetitions, several) }],
    ),
  );
  return againstParticipants('Precision of the compensation scale against participants', { title: `Width of the scale's 90% interval at ${atLatency} ms`, scale: { zero: true } }, points, goalWidth);
}

/** Power to detect the latency and the scale effects against participants, with Monte Carlo error bars (1.96 SE) and the goal. */
export function powerSpec(rows: readonly SizeRow[], goalPower: number | null): TopLevelSpec {
  const several = new Set(rows.map((row) => row.repetitions)).size > 1;
  const points = rows.flatMap((row) =>
    (
      [
        ['latency effect', row.latency_power],
        ['scale effect', row.scale_power],
      ] as const
    ).map(([effect, power]) => ({
      participants: row.participants,
      value: power.estimate,
      low: Math.max(0, power.estimate - 1.96 * power.mc_se),
      high: Math.min(1, power.estimate + 1.96 * power.mc_se),
      series: seriesName(effect, row.repetitions, several),
    })),
  );
  return againstParticipants('Power against participants', { title: 'Power (share of studies detecting the effect)', scale: { domain: [0, 1] } }, points, goalPower);
}
