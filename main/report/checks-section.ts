/**
 * The Run report's verdict block: the board under test (board id, operator, firmware), the
 * verdict, and the checks table, at the top so the report can be attached to a test record.
 */
import type { CheckReport } from '@shared/engine/checks';
import { escapeHtml as e, table } from './html';

export interface RunIdentity {
  board: string | null;
  operator: string | null;
  firmware: string | null;
}

export const CHECKS_CSS = `
.verdict { display: inline-block; font-size: 20px; font-weight: 700; padding: 4px 14px; border: 3px solid var(--ink); margin: 6px 0; letter-spacing: 0.05em; }
.verdict-fail { color: var(--crit); border-color: var(--crit); }
.verdict-incomplete { color: var(--warn); border-color: var(--warn); border-style: dashed; }
.result-fail { color: var(--crit); font-weight: 700; }
.result-not-measured { color: var(--warn); }
`;

export function checksSection(checks: CheckReport | null, id: RunIdentity): string {
  const who = table(
    ['board id', 'operator', 'firmware version'],
    [[e(id.board ?? 'not given'), e(id.operator ?? 'not given'), e(id.firmware ?? 'not given')]],
  );
  if (!checks) {
    return `<section id="checks"><h2>Board</h2>${who}<p class="note">The profile has no expect key, so the run was not judged against the board's design values.</p></section>`;
  }
  const rows = checks.checks.map((c) => [
    e(c.code),
    c.measured === null ? '—' : `${c.measured}`,
    `${c.min} … ${c.max}`,
    e(c.unit),
    `<span class="result-${e(c.result)}">${e(c.result)}</span>`,
    e(c.note),
  ]);
  const fault = checks.fault
    ? `<p class="result-fail">The charger faulted at ${(checks.fault.t / 60).toFixed(1)} min (${e(checks.fault.what)}): the run fails whatever the values.</p>`
    : '';
  return `<section id="checks"><h2>Verdict</h2>
<p><span id="verdict" class="verdict verdict-${e(checks.verdict)}">${e(checks.verdict.toUpperCase())}</span></p>
${who}${fault}
${table(['check', 'measured', 'limits', 'unit', 'result', 'how it was measured'], rows, "Measured against the profile's expect ranges")}
</section>`;
}
