/**
 * `lagparity/report`: the self-contained HTML report. A separate entry point
 * because its charting library (Vega-Lite on Vega) takes about half a second
 * to import, which a matchmaker's process should not pay.
 */
export { REPORT_CAUTIONS, renderReport } from './render-report.js';
export type { Report, ReportInput, ReportLobby } from './render-report.js';
