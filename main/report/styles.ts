/** The report's inline stylesheet: plain, high-contrast, print-friendly (A4, no dark backgrounds). */
import { phaseCss } from './phase-css';

export const REPORT_CSS = `
:root { --ink: #1d232a; --muted: #56606b; --rule: #c9ced4; --warn: #8a5a00; --crit: #a32020; }
* { box-sizing: border-box; }
body { font: 14px/1.45 system-ui, 'Segoe UI', Roboto, 'DejaVu Sans', sans-serif; color: var(--ink); margin: 0 auto; max-width: 1100px; padding: 24px; }
h1 { font-size: 24px; margin: 0 0 4px; }
h2 { font-size: 18px; margin: 28px 0 8px; border-bottom: 2px solid var(--ink); padding-bottom: 2px; }
h3 { font-size: 15px; margin: 14px 0 4px; }
.subtitle { color: var(--muted); margin: 0 0 12px; }
.caution { border: 2px solid var(--crit); padding: 10px 14px; margin: 12px 0; }
.caution strong { color: var(--crit); }
table { border-collapse: collapse; width: 100%; margin: 6px 0 10px; font-variant-numeric: tabular-nums; }
caption { text-align: left; color: var(--muted); padding-bottom: 4px; }
th, td { border: 1px solid var(--rule); padding: 4px 8px; text-align: left; vertical-align: top; }
th { background: #eef1f4; }
td.num { text-align: right; }
.level-critical { color: var(--crit); font-weight: 600; }
.level-warn { color: var(--warn); font-weight: 600; }
.timeline { display: flex; width: 100%; height: 44px; border: 1px solid var(--ink); margin: 8px 0; }
.seg { position: relative; overflow: hidden; border-right: 1px solid var(--ink); display: flex; align-items: center; justify-content: center; font-size: 12px; font-weight: 600; white-space: nowrap; min-width: 2px; }
.seg:last-child { border-right: 0; }
.seg span { background: rgba(255,255,255,0.85); padding: 0 4px; border-radius: 2px; }
${phaseCss()}
.swatch { display: inline-block; width: 28px; height: 14px; border: 1px solid var(--ink); vertical-align: middle; margin-right: 6px; }
.chart { break-inside: avoid; page-break-inside: avoid; margin: 10px 0 18px; }
.chart-box { position: relative; height: 260px; width: 100%; }
.cause { border: 1px solid var(--rule); padding: 8px 12px; margin: 8px 0; break-inside: avoid; }
.cause h3 { margin-top: 0; }
.confidence { font-variant-numeric: tabular-nums; color: var(--muted); font-weight: normal; }
.bar { display: inline-block; height: 10px; background: var(--ink); vertical-align: middle; margin-left: 6px; }
.note { color: var(--muted); }
footer { margin-top: 32px; border-top: 1px solid var(--rule); padding-top: 8px; color: var(--muted); font-size: 12px; }
@page { size: A4; margin: 14mm; }
@media print {
  body { padding: 0; max-width: none; font-size: 11pt; }
  * { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
  h2 { break-after: avoid; }
  table, .timeline { break-inside: avoid; }
  .chart-box { height: auto; }
  .chart-box canvas { width: 100% !important; height: auto !important; }
  a { color: inherit; text-decoration: none; }
}
`;
