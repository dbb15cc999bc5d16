/**
 * The report's charts as Vega-Lite specs: pure functions from the numbers the
 * report computed to a declarative description (data, marks, encodings).
 * Every axis has a title with its unit, every chart a legend for what colour
 * and shape mean, and colours come from the Okabe–Ito palette (`palette.ts`).
 *
 * Box plots are drawn from statistics computed here (Tukey's hinges, Tukey
 * 1977), not by Vega-Lite's own `boxplot` mark, so the picture and
 * the `summarize` table show the same numbers.
 */
import type { Config, TopLevelSpec } from 'vega-lite';
import { CATEGORY_COLOURS, OKABE_ITO } from './palette.js';

const FONT = 'sans-serif';

/** Shared look: fonts, sizes, the palette. */
export const CHART_CONFIG: Config = {
  font: FONT,
  background: '#ffffff',
  padding: 8,
  range: { category: [...CATEGORY_COLOURS] },
  axis: { labelFontSize: 11, titleFontSize: 12, titleFontWeight: 'normal', grid: true, gridColor: '#e4e4e4' },
  legend: { labelFontSize: 11, titleFontSize: 12, titleFontWeight: 'normal', symbolStrokeWidth: 2, labelLimit: 0, titleLimit: 0 },
  title: { fontSize: 13, fontWeight: 'normal', anchor: 'start' },
  view: { stroke: '#cccccc' },
};

export interface BoxGroup {
  readonly label: string;
  readonly rounds: number;
  readonly lower_whisker: number;
  readonly lower_hinge: number;
  readonly median: number;
  readonly upper_hinge: number;
  readonly upper_whisker: number;
  readonly mean_accuracy: number;
  readonly outliers: readonly number[];
}

/** Box plots of per-round accuracy, one box per group, with the attempt-weighted mean and the outliers. */
export function boxPlotSpec(groups: readonly BoxGroup[], axisTitle: string, title: string): TopLevelSpec {
  const order = groups.map((group) => group.label);
  const boxes = groups.map((group) => ({ ...group, outliers: undefined }));
  const outliers = groups.flatMap((group) => group.outliers.map((value) => ({ label: group.label, value })));
  const longLabels = order.some((label) => label.length > 10);
  const x = { field: 'label', type: 'nominal' as const, sort: [...order], title: axisTitle, axis: { labelAngle: longLabels ? -30 : 0, labelLimit: 160 } };
  const y = { type: 'quantitative' as const, scale: { domain: [0, 1] }, title: 'Per-round accuracy (hits / attempts)' };
  const MEAN = 'attempt-weighted mean';
  const OUTLIER = 'outlier round (beyond 1.5 hinge spreads)';
  const legend = { domain: [MEAN, OUTLIER], range: [OKABE_ITO.vermillion, OKABE_ITO.black] };
  // The legend's symbols are the marks' own: a filled diamond for the mean, an open circle for an outlier.
  const shapes = { domain: legend.domain, range: ['diamond', 'circle'] };
  const boxLegend = { title: null, orient: 'bottom' as const, direction: 'vertical' as const };
  const width = Math.max(200, 60 * groups.length);
  return {
    config: CHART_CONFIG,
    title,
    width,
    height: 260,
    layer: [
      {
        data: { values: boxes },
        mark: { type: 'rule' as const, color: OKABE_ITO.black },
        encoding: { x, y: { ...y, field: 'lower_whisker' }, y2: { field: 'upper_whisker' } },
      },
      {
        data: { values: boxes },
        mark: { type: 'bar' as const, size: 28, color: OKABE_ITO.skyBlue, opacity: 0.55, stroke: OKABE_ITO.blue, strokeWidth: 1 },
        encoding: { x, y: { ...y, field: 'lower_hinge' }, y2: { field: 'upper_hinge' } },
      },
      {
        data: { values: boxes },
        mark: { type: 'tick' as const, size: 28, thickness: 2, color: OKABE_ITO.blue },
        encoding: { x, y: { ...y, field: 'median' } },
      },
      {
        // Means and outliers in one layer, so that one legend shows each with its own colour and shape.
        data: { values: [...boxes.map((group) => ({ label: group.label, value: group.mean_accuracy, series: MEAN })), ...outliers.map((point) => ({ ...point, series: OUTLIER }))] },
        mark: { type: 'point' as const, filled: false, strokeWidth: 1.5, size: 50, opacity: 1 },
        encoding: {
          x,
          y: { ...y, field: 'value' },
          color: { field: 'series', type: 'nominal' as const, scale: legend, legend: boxLegend },
          fill: { field: 'series', type: 'nominal' as const, scale: { domain: legend.domain, range: [OKABE_ITO.vermillion, 'transparent'] }, legend: boxLegend },
          shape: { field: 'series', type: 'nominal' as const, scale: shapes, legend: boxLegend },
        },
      },
    ],
  } satisfies TopLevelSpec;
}

export interface CurvePoint {
  readonly scale: string;
  readonly latency: number;
  readonly probability: number;
  readonly lower: number;
  readonly upper: number;
}

export interface ObservedPoint {
  readonly scale: string;
  readonly latency: number;
  readonly accuracy: number;
  readonly attempts: number;
}

export interface CurvePanel {
  readonly difficulty: string;
  readonly curve: readonly CurvePoint[];
  readonly observed: readonly ObservedPoint[];
}

/**
 * Fitted hit probability against latency, one curve per scale, with the 95%
 * band when `band`, over the observed per-condition means; one panel per
 * difficulty.
 */
export function curvesSpec(panels: readonly CurvePanel[], scaleOrder: readonly string[], band: boolean): TopLevelSpec {
  const colour = {
    field: 'scale',
    type: 'nominal' as const,
    sort: [...scaleOrder],
    scale: { domain: [...scaleOrder], range: CATEGORY_COLOURS.slice(0, scaleOrder.length) },
    title: 'Compensation scale (×)',
    // Full-strength legend symbols, whatever the band's opacity.
    legend: { orient: 'bottom' as const, direction: 'horizontal' as const, symbolOpacity: 1, symbolType: 'stroke' },
  };
  const x = { field: 'latency', type: 'quantitative' as const, title: 'Latency (ms)' };
  const y = { type: 'quantitative' as const, scale: { domain: [0, 1] }, title: 'Hit probability' };
  return {
    config: CHART_CONFIG,
    title: band ? 'Fitted hit probability with 95% band (delta method), over the observed means' : 'Fitted hit probability over the observed means (no band: the model has no covariance)',
    resolve: { scale: { color: 'shared' as const, shape: 'shared' as const }, legend: { color: 'shared' as const, shape: 'shared' as const } },
    hconcat: panels.map((panel) => ({
      title: `Difficulty: ${panel.difficulty}`,
      width: 270,
      height: 250,
      layer: [
        ...(band
          ? [
              {
                data: { values: [...panel.curve] },
                mark: { type: 'area' as const, opacity: 0.18 },
                encoding: { x, y: { ...y, field: 'lower' }, y2: { field: 'upper' }, color: colour },
              },
            ]
          : []),
        {
          data: { values: [...panel.curve] },
          mark: { type: 'line' as const, strokeWidth: 2 },
          encoding: { x, y: { ...y, field: 'probability' }, color: colour, detail: { field: 'scale' } },
        },
        {
          data: { values: [...panel.observed] },
          mark: { type: 'point' as const, filled: true, size: 36, stroke: '#ffffff', strokeWidth: 0.5 },
          encoding: {
            x,
            y: { ...y, field: 'accuracy' },
            color: colour,
            shape: { datum: 'observed mean accuracy per condition', type: 'nominal' as const, legend: { title: null, orient: 'bottom' as const } },
          },
        },
      ],
    })),
  } satisfies TopLevelSpec;
}

export interface CalibrationPoint {
  readonly mean_predicted: number;
  readonly observed: number;
  readonly attempts: number;
  readonly bin: string;
}

/** Predicted against observed in bins of predicted probability, with the diagonal. */
export function calibrationSpec(points: readonly CalibrationPoint[]): TopLevelSpec {
  const legend = { domain: ['playtest, one point per bin', 'perfect calibration (y = x)'], range: [OKABE_ITO.blue, OKABE_ITO.black] };
  const x = { type: 'quantitative' as const, scale: { domain: [0, 1] }, title: 'Predicted hit probability (attempt-weighted bin mean)' };
  const y = { type: 'quantitative' as const, scale: { domain: [0, 1] }, title: 'Observed hit rate (hits / attempts)' };
  return {
    config: CHART_CONFIG,
    title: 'Calibration in ten bins of predicted probability',
    width: 320,
    height: 320,
    layer: [
      {
        data: { values: [{ p: 0 }, { p: 1 }] },
        mark: { type: 'line' as const, strokeDash: [5, 4], strokeWidth: 1.5 },
        encoding: { x: { ...x, field: 'p' }, y: { ...y, field: 'p' }, color: { datum: 'perfect calibration (y = x)', type: 'nominal' as const, scale: legend, legend: { title: null, orient: 'bottom' as const, direction: 'vertical' as const } } },
      },
      {
        data: { values: [...points] },
        mark: { type: 'line' as const, strokeWidth: 1, opacity: 0.6 },
        encoding: { x: { ...x, field: 'mean_predicted' }, y: { ...y, field: 'observed' }, color: { datum: 'playtest, one point per bin', type: 'nominal' as const, scale: legend } },
      },
      {
        data: { values: [...points] },
        mark: { type: 'point' as const, filled: true },
        encoding: {
          x: { ...x, field: 'mean_predicted' },
          y: { ...y, field: 'observed' },
          color: { datum: 'playtest, one point per bin', type: 'nominal' as const, scale: legend },
          size: { field: 'attempts', type: 'quantitative' as const, title: 'Attempts in bin', scale: { range: [20, 260] }, legend: { orient: 'right' as const } },
        },
      },
    ],
  } satisfies TopLevelSpec;
}

export interface LobbyPlayerPoint {
  readonly player: string;
  readonly before: number;
  readonly after: number;
  /** `×1.234`, or `not scaled` for an ineligible player. */
  readonly scale_label: string;
  /** The rule that holds the player back, or null. */
  readonly held_by: string | null;
  readonly eligible: boolean;
}

const BEFORE = 'before (scale 1)';
const AFTER = 'after (with its scale)';
const TARGET = 'target';

/** The legend's words for the rules that hold players back: "held below the target by the soft cap or the cap". */
export function heldLabel(bindings: readonly string[]): string {
  const names = [...new Set(bindings)].map((binding) => (binding === 'soft_cap' ? 'the soft cap' : `the ${binding}`));
  const listed = names.length <= 1 ? (names[0] ?? 'a rule') : `${names.slice(0, -1).join(', ')} or ${names[names.length - 1]}`;
  return `held below the target by ${listed} (dashed: the gap left)`;
}

/**
 * Before/after expected hit probability per player, the target, the players a
 * rule holds below the target marked with the gap left, the scales printed.
 * `domain` is the y-axis range, shared by every lobby of a report so that the
 * same gap looks the same size in every chart.
 */
export function lobbySpec(title: string, players: readonly LobbyPlayerPoint[], target: number, domain: readonly [number, number]): TopLevelSpec {
  const order = players.map((player) => player.player);
  const held = players.filter((player) => player.held_by !== null);
  const HELD = heldLabel(held.map((player) => player.held_by as string));
  // The held entry only where a rule holds someone back: a legend names what the chart shows.
  const entries = held.length === 0
    ? { domain: [BEFORE, AFTER, TARGET], colours: [OKABE_ITO.orange, OKABE_ITO.blue, OKABE_ITO.black], shapes: ['circle', 'diamond', 'stroke'] }
    : { domain: [BEFORE, AFTER, HELD, TARGET], colours: [OKABE_ITO.orange, OKABE_ITO.blue, OKABE_ITO.vermillion, OKABE_ITO.black], shapes: ['circle', 'diamond', 'triangle-down', 'stroke'] };
  const legend = { domain: entries.domain, range: entries.colours };
  const shapes = { domain: entries.domain, range: entries.shapes };
  const long = players.flatMap((player) => [
    { player: player.player, series: BEFORE, p: player.before },
    ...(player.eligible ? [{ player: player.player, series: AFTER, p: player.after }] : []),
  ]);
  const x = { field: 'player', type: 'nominal' as const, sort: [...order], title: 'Player (in order of latency estimate, lowest first)', axis: { labelAngle: -35, labelLimit: 120 } };
  const y = { type: 'quantitative' as const, scale: { domain: [...domain], zero: false, nice: false }, title: 'Expected P(hit)' }; // short: a title longer than the plot pushes the plot down (the caption says the axis is shared)
  const colourLegend = { title: null, orient: 'bottom' as const, direction: 'horizontal' as const, columns: 2 };
  return {
    config: CHART_CONFIG,
    title: { text: title, offset: 18 },
    width: Math.max(320, 46 * players.length),
    height: 260,
    layer: [
      {
        data: { values: players.filter((player) => player.eligible) },
        mark: { type: 'rule' as const, color: '#999999', strokeWidth: 1.5 },
        encoding: { x, y: { ...y, field: 'before' }, y2: { field: 'after' } },
      },
      {
        data: { values: [{ target }] },
        mark: { type: 'rule' as const, strokeDash: [6, 3], strokeWidth: 1.5 },
        encoding: {
          y: { ...y, field: 'target' },
          color: { datum: TARGET, type: 'nominal' as const, scale: legend, legend: colourLegend },
          shape: { datum: TARGET, type: 'nominal' as const, scale: shapes, legend: colourLegend },
        },
      },
      ...(held.length === 0
        ? []
        : [
            {
              // The gap a rule leaves: from the player's result up to the target.
              data: { values: held.map((player) => ({ ...player, target })) },
              mark: { type: 'rule' as const, color: OKABE_ITO.vermillion, strokeDash: [3, 2], strokeWidth: 2 },
              encoding: { x, y: { ...y, field: 'after' }, y2: { field: 'target' } },
            },
          ]),
      {
        data: { values: long },
        mark: { type: 'point' as const, filled: true, size: 70, opacity: 1 },
        encoding: {
          x,
          y: { ...y, field: 'p' },
          color: { field: 'series', type: 'nominal' as const, scale: legend, legend: colourLegend },
          shape: { field: 'series', type: 'nominal' as const, scale: shapes, legend: colourLegend },
        },
      },
      ...(held.length === 0
        ? []
        : [
            {
              // An open triangle around the result of a held player, at its own height.
              data: { values: held },
              mark: { type: 'point' as const, filled: false, size: 260, strokeWidth: 2 },
              encoding: {
                x,
                y: { ...y, field: 'after' },
                color: { datum: HELD, type: 'nominal' as const, scale: legend, legend: colourLegend },
                shape: { datum: HELD, type: 'nominal' as const, scale: shapes, legend: colourLegend },
              },
            },
          ]),
      {
        data: { values: [...players] },
        mark: { type: 'text' as const, fontSize: 10, baseline: 'bottom' as const, color: '#333333' },
        encoding: { x, y: { value: -6 }, text: { field: 'scale_label' } },
      },
    ],
  } satisfies TopLevelSpec;
}

export interface ScaleNeededMarks {
  readonly floor: number;
  readonly cap: number;
  readonly softCapAbove: number | null;
  readonly latencyLimit: number | null;
}

/**
 * The scale each latency needs to reach the target (dashed) against the scale
 * the rules grant (solid), with the floor, the soft cap's threshold and the
 * cap as horizontal lines and the eligibility limit as a vertical one: where
 * the solid line leaves the dashed one, compensation stops short.
 */
export function scaleNeededSpec(title: string, points: readonly { latency: number; needed: number | null; granted: number | null }[], marks: ScaleNeededMarks): TopLevelSpec {
  const NEEDED = 'scale needed to reach the target';
  const GRANTED = 'scale the rules grant';
  const long = points.flatMap((point) => [
    ...(point.needed === null ? [] : [{ latency: point.latency, series: NEEDED, scale: point.needed }]),
    ...(point.granted === null ? [] : [{ latency: point.latency, series: GRANTED, scale: point.granted }]),
  ]);
  const lines = [
    { label: `floor ${marks.floor}`, value: marks.floor },
    ...(marks.softCapAbove === null ? [] : [{ label: `soft cap from ${marks.softCapAbove}`, value: marks.softCapAbove }]),
    { label: `cap ${marks.cap}`, value: marks.cap },
  ];
  const x = { field: 'latency', type: 'quantitative' as const, title: 'Latency (ms)' };
  const y = { type: 'quantitative' as const, title: 'Compensation scale (×)', scale: { zero: false } };
  const legend = { title: null, orient: 'bottom' as const, direction: 'horizontal' as const };
  return {
    config: CHART_CONFIG,
    title,
    width: 460,
    height: 260,
    layer: [
      {
        data: { values: lines },
        mark: { type: 'rule' as const, color: '#777777', strokeWidth: 1 },
        encoding: { y: { ...y, field: 'value' } },
      },
      {
        data: { values: lines },
        mark: { type: 'text' as const, align: 'left' as const, baseline: 'bottom' as const, dx: 4, dy: -2, fontSize: 10, color: '#444444' },
        encoding: { x: { value: 0 }, y: { ...y, field: 'value' }, text: { field: 'label' } },
      },
      ...(marks.latencyLimit === null
        ? []
        : [
            {
              data: { values: [{ limit: marks.latencyLimit, label: `latency limit ${marks.latencyLimit} ms: not scaled beyond` }] },
              mark: { type: 'rule' as const, color: OKABE_ITO.vermillion, strokeDash: [4, 3], strokeWidth: 1.5 },
              encoding: { x: { ...x, field: 'limit' } },
            },
            {
              data: { values: [{ limit: marks.latencyLimit, label: `latency limit ${marks.latencyLimit} ms` }] },
              mark: { type: 'text' as const, align: 'right' as const, baseline: 'top' as const, dx: -4, dy: 4, fontSize: 10, color: OKABE_ITO.vermillion },
              encoding: { x: { ...x, field: 'limit' }, y: { value: 0 }, text: { field: 'label' } },
            },
          ]),
      {
        data: { values: long },
        mark: { type: 'line' as const, strokeWidth: 2 },
        encoding: {
          x,
          y: { ...y, field: 'scale' },
          color: { field: 'series', type: 'nominal' as const, scale: { domain: [NEEDED, GRANTED], range: [OKABE_ITO.orange, OKABE_ITO.blue] }, legend },
          strokeDash: { field: 'series', type: 'nominal' as const, scale: { domain: [NEEDED, GRANTED], range: [[6, 3], [1, 0]] }, legend },
        },
      },
    ],
  } satisfies TopLevelSpec;
}

export interface FieldBandPoint {
  readonly band: string;
  readonly series: string;
  readonly p: number;
  readonly lower: number | null;
  readonly upper: number | null;
}

export const FIELD_SERIES = ['model, before compensation (scale 1)', 'model, after (applied scales)', 'observed (as played)'] as const;

/**
 * The field check by latency band: the model's hit probability before
 * compensation (scale 1) and after (the applied scales), and the observed
 * rate, each band side by side, with 95% intervals where there are any.
 */
export function fieldBandsSpec(points: readonly FieldBandPoint[], bandOrder: readonly string[]): TopLevelSpec {
  const legend = { domain: [...FIELD_SERIES], range: [OKABE_ITO.orange, OKABE_ITO.skyBlue, OKABE_ITO.blue] };
  const shapes = { domain: [...FIELD_SERIES], range: ['circle', 'diamond', 'square'] };
  const x = { field: 'band', type: 'nominal' as const, sort: [...bandOrder], title: 'Latency band', axis: { labelAngle: 0 } };
  const offset = { field: 'series', type: 'nominal' as const, sort: [...FIELD_SERIES] };
  const y = { type: 'quantitative' as const, scale: { zero: false, nice: true }, title: 'Hit probability' };
  const colourLegend = { title: null, orient: 'bottom' as const, direction: 'vertical' as const };
  return {
    config: CHART_CONFIG,
    title: 'Live play by latency band: predicted before and after compensation, and observed',
    width: Math.max(320, 90 * bandOrder.length),
    height: 280,
    layer: [
      {
        data: { values: points.filter((point) => point.lower !== null && point.upper !== null) },
        mark: { type: 'rule' as const, strokeWidth: 2 },
        encoding: { x, xOffset: offset, y: { ...y, field: 'lower' }, y2: { field: 'upper' }, color: { field: 'series', type: 'nominal' as const, scale: legend, legend: colourLegend } },
      },
      {
        data: { values: [...points] },
        mark: { type: 'point' as const, filled: true, size: 70, opacity: 1 },
        encoding: {
          x,
          xOffset: offset,
          y: { ...y, field: 'p' },
          color: { field: 'series', type: 'nominal' as const, scale: legend, legend: colourLegend },
          shape: { field: 'series', type: 'nominal' as const, scale: shapes, legend: colourLegend },
        },
      },
    ],
  } satisfies TopLevelSpec;
}
