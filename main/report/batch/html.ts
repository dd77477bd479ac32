/**
 * The Batch report: ONE self-contained HTML file (inline CSS, inline Chart.js) for the runs
 * of one burn-in: the yield, one row per board with its verdict, measured values, first
 * failing check and top diagnosis cause, and the spread of each measured value across boards.
 */
import { PROFILE_CAUTION } from '@shared/chemistry/profile';
import { CHECK_MODULES } from '@shared/engine/checks';
import { chartJsSource, taperlineVersion } from '../assets';
import { escapeHtml as e, jsonForScript, reportHead, reportScripts, table } from '../html';
import type { BatchSummary, JudgedRun } from '../judge-run';
import { REPORT_CSS } from '../styles';
import { BATCH_STRIP_SCRIPT } from './strip-script';
import { batchRows, measuredKeys } from './table';

const BATCH_CSS = `
.yield { font-size: 20px; margin: 8px 0; }
.v-pass { font-weight: 600; }
.v-fail { color: var(--crit); font-weight: 700; }
.v-incomplete { color: var(--warn); font-weight: 600; }
td.out { color: var(--crit); font-weight: 700; }
td.nm { color: var(--muted); }
#batch-boards table { font-size: 12px; }
#batch-boards td, #batch-boards th { padding: 3px 5px; }
#batch-boards td:first-child { white-space: nowrap; }
.strips { display: grid; grid-template-columns: repeat(auto-fill, minmax(460px, 1fr)); gap: 12px; }
`;

export function buildBatchReportHtml(
  runs: readonly JudgedRun[],
  summary: BatchSummary,
  title: string,
  generatedAt: Date = new Date(),
): string {
  const keys = measuredKeys(runs);
  const rows = batchRows(runs);
  const unitOf = (k: (typeof keys)[number]) => CHECK_MODULES[k].unit;
  const head = [
    'board',
    'verdict',
    ...keys.map((k) => (unitOf(k) ? `${k} (${unitOf(k)})` : k)),
    'first failing check',
    'top diagnosis cause',
    'operator',
    'firmware',
  ];
  const cells = rows.map((r) => [
    e(r.board || r.source),
    `<span class="v-${e(r.verdict)}">${e(r.verdict)}</span>`,
    ...keys.map((k) => {
      const v = r.values[k];
      if (!v) return '';
      if (v.measured === null)
        return `<span class="${v.result === 'fail' ? 'v-fail' : 'nm'}">${v.result === 'not-measured' ? '—' : e(v.result)}</span>`;
      return v.result === 'fail' ? `<span class="v-fail">${v.measured}</span>` : String(v.measured);
    }),
    e(r.firstFailure),
    e(r.topCause),
    e(r.operator),
    e(r.firmware),
  ]);
  const strips = keys.flatMap((k) => {
    const points: { x: number; y: number; board: string; result: string }[] = [];
    let min = Infinity;
    let max = -Infinity;
    runs.forEach((r, i) => {
      const c = r.report.checks.find((x) => x.code === k);
      if (!c) return;
      min = c.min;
      max = c.max;
      if (c.measured !== null)
        points.push({ x: c.measured, y: i, board: r.report.board ?? r.source, result: c.result });
    });
    if (points.length === 0) return [];
    const xs = [min, max, ...points.map((p) => p.x)];
    const lo = Math.min(...xs);
    const hi = Math.max(...xs);
    const pad = (hi - lo || Math.abs(hi) || 1) * 0.08;
    const unit = unitOf(k);
    return [
      {
        id: `strip-${k}`,
        code: k,
        unit,
        title: unit ? `${k} (${unit})` : k,
        min,
        max,
        axisMin: lo - pad,
        axisMax: hi + pad,
        boards: runs.map((r) => r.report.board ?? r.source),
        points,
      },
    ];
  });
  const stripHeight = Math.max(180, 60 + 16 * runs.length);
  const scripts = reportScripts();
  return `<!doctype html>
<html lang="en">
${reportHead({ title, css: REPORT_CSS + BATCH_CSS, version: taperlineVersion(), nonce: scripts.nonce })}
<body>
<header id="batch-title">
<h1>${e(title)}</h1>
<p class="subtitle">Batch report · ${summary.boards} boards</p>
<p class="yield" id="batch-yield">Yield <strong>${summary.yieldPct} %</strong>: ${summary.pass} pass, ${summary.fail} fail, ${summary.incomplete} incomplete</p>
</header>
<section class="caution" aria-label="Safety caution">
<p><strong>Caution:</strong> ${e(PROFILE_CAUTION.replace(/^Caution:\s*/i, ''))}</p>
</section>
<section id="batch-boards">
<h2>Boards</h2>
${table(head, cells, 'One row per board: measured values in each key’s unit; failing values in bold red; — = not measured')}
</section>
<section id="batch-spread">
<h2>Spread across the boards</h2>
<p class="note">Each dot is one board; the dashed lines are the design limits. A cluster pressed against a limit points at a lot of parts at the edge of tolerance.</p>
<div class="strips">
${strips.map((s) => `<div class="chart"><h3>${e(s.title)}</h3><div class="chart-box" style="height:${stripHeight}px"><canvas id="${e(s.id)}" role="img" aria-label="${e(s.title)} across the boards"></canvas></div></div>`).join('\n')}
</div>
</section>
<footer>Taperline ${e(taperlineVersion())} · generated ${e(generatedAt.toISOString())}</footer>
<script type="application/json" id="batch-data">${jsonForScript({ strips })}</script>
${scripts.script(chartJsSource())}
${scripts.script(BATCH_STRIP_SCRIPT)}
</body>
</html>
`;
}
