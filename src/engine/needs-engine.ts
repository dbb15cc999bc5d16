/** Whether a trials argument needs the engine (embedded DuckDB): a Parquet file or a glob pattern (`*`, `?`, `[`, `{`). */
export function needsEngine(path: string): boolean {
  return /\.parquet$/i.test(path) || /[*?[{]/.test(path);
}
