/**
 * Rendering a Vega-Lite chart to a standalone SVG string in Node, without a
 * browser or a canvas: Vega-Lite compiles the declarative spec to Vega, and a
 * headless Vega view (`renderer: 'none'`) writes SVG.
 *
 * Vega-Lite (Satyanarayan, A., Moritz, D., Wongsuphasawat, K. and Heer, J.
 * (2017), "Vega-Lite: A Grammar of Interactive Graphics", IEEE TVCG 23(1),
 * 341–350) is a grammar of graphics: a chart is data plus marks plus
 * encodings, so the report's charts are specs that a reviewer can read, not
 * drawing code.
 *
 * Nothing is fetched: every chart's data is inline, and the view gets a
 * loader that refuses any URL. Vega's log messages are collected and
 * returned, never written to the console.
 */
import type { Loader } from 'vega';
import type { TopLevelSpec } from 'vega-lite';
import { escapeControlCharacters } from '../formats/control-characters.js';

/**
 * The charting packages are optional peer dependencies: a matchmaker's install
 * does not carry them (about 22 MB), and they are imported on the first chart.
 */
export const CHARTING_PACKAGES = ['vega@6.4.0', 'vega-lite@6.4.3'] as const;

/** Thrown when the charting packages are not installed; its message says what to install. */
export class MissingChartingError extends Error {
  readonly code = 'missing_optional_package';
}

type Vega = typeof import('vega');
type VegaLite = typeof import('vega-lite');
let charting: Promise<{ vega: Vega; vegaLite: VegaLite }> | undefined;

/** Import vega and vega-lite once; a clear error naming both packages when they are missing. */
export function loadCharting(): Promise<{ vega: Vega; vegaLite: VegaLite }> {
  charting ??= Promise.all([import('vega'), import('vega-lite')]).then(
    ([vega, vegaLite]) => ({ vega, vegaLite }),
    (cause: unknown) => {
      charting = undefined;
      const missing = cause instanceof Error && /Cannot find (package|module)|ERR_MODULE_NOT_FOUND/.test(`${(cause as { code?: string }).code ?? ''} ${cause.message}`);
      throw missing
        ? new MissingChartingError(`the HTML report draws its charts with the optional packages ${CHARTING_PACKAGES.join(' and ')}, which are not installed: run \`npm install ${CHARTING_PACKAGES.join(' ')}\` where lagparity is installed`)
        : cause;
    },
  );
  return charting;
}

/** The log levels of vega-util's logger (None 0, Error 1, Warn 2, Info 3, Debug 4). */
const WARN = 2;

interface CollectingLogger {
  readonly messages: string[];
  level(value?: number): number | CollectingLogger;
  error(...args: unknown[]): CollectingLogger;
  warn(...args: unknown[]): CollectingLogger;
  info(...args: unknown[]): CollectingLogger;
  debug(...args: unknown[]): CollectingLogger;
}

function collectingLogger(): CollectingLogger {
  let level = WARN;
  const messages: string[] = [];
  const logger: CollectingLogger = {
    messages,
    level(value?: number) {
      if (value === undefined) return level;
      level = value;
      return logger;
    },
    error: (...args) => {
      messages.push(`error: ${args.map(String).join(' ')}`);
      return logger;
    },
    warn: (...args) => {
      if (level >= WARN) messages.push(`warning: ${args.map(String).join(' ')}`);
      return logger;
    },
    info: () => logger,
    debug: () => logger,
  };
  return logger;
}

const refuse = (uri: string): Promise<never> => Promise.reject(new Error(`the report loads nothing from outside, got a request for ${uri}`));

/** A Vega loader that loads nothing. */
const offlineLoader: Loader = {
  load: refuse,
  sanitize: refuse,
  http: refuse,
  file: refuse,
};

/**
 * Make the element ids of one SVG unique in a page that holds several:
 * Vega numbers clip paths from a counter shared by every view in the process,
 * so ids would depend on what was rendered before and could collide. Every id
 * is renamed `<prefix>-<n>` in order of appearance.
 */
export function prefixSvgIds(svg: string, prefix: string): string {
  const renamed = new Map<string, string>();
  const rename = (id: string): string => {
    let next = renamed.get(id);
    if (next === undefined) {
      next = `${prefix}-${renamed.size + 1}`;
      renamed.set(id, next);
    }
    return next;
  };
  // Ids first in document order, so that numbering does not depend on where references appear.
  for (const match of svg.matchAll(/\sid="([^"]+)"/g)) rename(match[1] as string);
  return svg
    .replace(/(\sid=")([^"]+)(")/g, (_, open: string, id: string, close: string) => `${open}${rename(id)}${close}`)
    .replace(/url\(#([^)]+)\)/g, (_, id: string) => `url(#${renamed.get(id) ?? id})`)
    .replace(/(\s(?:xlink:)?href="#)([^"]+)(")/g, (_, open: string, id: string, close: string) => `${open}${renamed.get(id) ?? id}${close}`);
}

export interface RenderedChart {
  readonly svg: string;
  /** Vega-Lite and Vega log messages at warning level and above. */
  readonly messages: readonly string[];
}

/**
 * Render one Vega-Lite spec (inline data only) to SVG. `id` prefixes the
 * element ids (see {@link prefixSvgIds}).
 *
 * Cost: one Vega dataflow run; tens of milliseconds for a report chart.
 */
export async function renderChartSvg(spec: TopLevelSpec, id: string): Promise<RenderedChart> {
  const { vega, vegaLite } = await loadCharting();
  const logger = collectingLogger();
  const vegaSpec = vegaLite.compile(spec, { logger: logger as never }).spec;
  const view = new vega.View(vega.parse(vegaSpec), { renderer: 'none', loader: offlineLoader, logger: logger as never, logLevel: WARN });
  try {
    // Data in labels (player ids, teams) reaches the SVG as Vega writes it: its control characters and bidi marks escaped as the rest of the page's are.
    const svg = escapeControlCharacters(await view.toSVG());
    return { svg: prefixSvgIds(svg, id), messages: logger.messages };
  } finally {
    view.finalize();
  }
}
