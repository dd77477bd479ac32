/** One function per section of the Run report; each returns escaped HTML. */
import { PROFILE_CAUTION } from '@shared/chemistry/profile';
import type { ResolvedProfile } from '@shared/chemistry/types';
import type { Diagnosis } from '@shared/engine/diagnosis';
import type { AlarmEvent, EngineEvent, Phase } from '@shared/engine/types';
import { clock, duration, escapeHtml, table } from './html';
import type { GapRow, PhaseSegment, ReportMetrics } from './metrics';

/** How the report names each phase (text, so colour is never the only signal). */
export const PHASE_NAMES: Record<Phase, string> = {
  precondition: 'precondition',
  cc: 'CC (constant current)',
  cv: 'CV (constant voltage)',
  done: 'done',
  fault: 'fault',
  idle: 'idle (no usable source)',
};

const e = escapeHtml;
const num = (v: number | null | undefined, digits: number, unit = ''): string =>
  v === null || v === undefined || !Number.isFinite(v)
    ? '—'
    : `${v.toFixed(digits)}${unit ? ` ${unit}` : ''}`;

export function titleSection(title: string, source: string | undefined, profile: ResolvedProfile): string {
  return `<header id="report-title">
<h1>${e(title)}</h1>
<p class="subtitle">Run report · ${e(profile.name)} · ${e(profile.chemistry)} ${profile.cells} cell(s)${
    source ? ` · source: ${e(source)}` : ''
  }</p>
</header>
<section id="caution" class="caution" aria-label="Safety caution">
<p><strong>Caution:</strong> ${e(PROFILE_CAUTION.replace(/^Caution:\s*/i, ''))}</p>
<p>This report describes what the telemetry showed; it is not a safety certification. Defer to the cell maker's datasheet and local codes.</p>
</section>`;
}

export function profileSection(profile: ResolvedProfile): string {
  const v = (perCell: number | null) =>
    perCell === null ? '—' : `${perCell.toFixed(3)} V/cell (${(perCell * profile.cells).toFixed(2)} V pack)`;
  const rows: [string, string][] = [
    ['name', e(profile.name)],
    ['chemistry', e(profile.chemistry)],
    ['cells in series', String(profile.cells)],
    ['capacity', num(profile.capacityAh, 2, 'Ah')],
    ['charge current (set point)', num(profile.chargeCurrentA, 2, 'A')],
    ['termination current', num(profile.terminationA, 3, 'A')],
    ['safety timer', profile.timerMin === null ? 'none' : `${profile.timerMin} min`],
    ['charge temperature window', `${profile.tempWindowC[0]} °C to ${profile.tempWindowC[1]} °C`],
    [
      'input (MPPT) set point',
      profile.inputSetpointV === null ? 'not set' : num(profile.inputSetpointV, 2, 'V'),
    ],
    ['regulation voltage', v(profile.regulationVPerCell)],
    ['float voltage', v(profile.floatVPerCell)],
    ['overvoltage limit', v(profile.overvoltageVPerCell)],
    ['precondition threshold', v(profile.preconditionVPerCell)],
    ['precondition current', num(profile.preconditionA, 3, 'A')],
    ['precondition time-out', `${profile.preconditionTimeoutMin} min`],
    ['stall after', `${profile.stallMin} min`],
    ['silence after', `${profile.silenceS} s`],
  ];
  if (profile.minusDeltaVPerCell !== null)
    rows.push(['−ΔV termination', `${(profile.minusDeltaVPerCell * 1000).toFixed(1)} mV/cell`]);
  if (profile.dTdtCPerMin !== null) rows.push(['dT/dt termination', `${profile.dTdtCPerMin} °C/min`]);
  if (profile.tempCompVPerCPerCell !== null) {
    rows.push(['temperature compensation', `${(profile.tempCompVPerCPerCell * 1000).toFixed(1)} mV/°C/cell`]);
  }
  if (profile.thermistor) rows.push(['thermistor', `<code>${e(JSON.stringify(profile.thermistor))}</code>`]);
  if (Object.keys(profile.fields).length)
    rows.push(['field mapping', `<code>${e(JSON.stringify(profile.fields))}</code>`]);
  return `<section id="profile"><h2>Profile</h2>${table(['setting', 'value'], rows)}</section>`;
}

export function timelineSection(segments: PhaseSegment[], startT: number, endT: number): string {
  const span = Math.max(endT - startT, 1e-9);
  const bar = segments
    .map((s) => {
      const width = ((s.endT - s.startT) / span) * 100;
      const label = `${s.phase} ${duration(s.endT - s.startT)}`;
      return `<div class="seg ph-${s.phase}" style="width:${width.toFixed(3)}%" title="${e(label)}" role="listitem" aria-label="${e(
        label,
      )}">${width >= 8 ? `<span>${e(s.phase)}</span>` : ''}</div>`;
    })
    .join('');
  const rows = segments.map((s) => [
    `<span class="swatch ph-${s.phase}"></span>${e(PHASE_NAMES[s.phase])}`,
    clock(s.startT),
    clock(s.endT),
    duration(s.endT - s.startT),
  ]);
  return `<section id="timeline"><h2>Phase timeline</h2>
${segments.length ? `<div class="timeline" role="list" aria-label="phases in time order">${bar}</div>` : '<p class="note">No phase was recorded.</p>'}
${table(['phase', 'from (h:mm:ss)', 'to (h:mm:ss)', 'duration'], rows)}
</section>`;
}

export function metricsSection(m: ReportMetrics): string {
  const rows: [string, string][] = [
    ['duration', duration(m.durationS)],
    ['charge into the pack', num(m.ah, 3, 'Ah')],
    ['energy into the pack', num(m.wh, 2, 'Wh')],
    ['energy from the source', num(m.sourceWh, 2, 'Wh')],
    ['efficiency (pack ÷ source)', m.efficiency === null ? '—' : `${(m.efficiency * 100).toFixed(1)} %`],
    [
      'internal resistance (pack, from current steps)',
      m.internalResistanceOhm === null
        ? '— (no clear current step)'
        : `${(m.internalResistanceOhm * 1000).toFixed(0)} mΩ`,
    ],
    ['highest pack voltage', num(m.maxVbatV, 3, 'V')],
    ['highest temperature', num(m.peakTempC, 1, '°C')],
    ['lowest source voltage', num(m.minVinV, 2, 'V')],
  ];
  const phaseRows = (Object.keys(PHASE_NAMES) as Phase[])
    .filter((p) => (m.phaseS[p] ?? 0) > 0)
    .map((p) => [e(PHASE_NAMES[p]), duration(m.phaseS[p] as number)]);
  return `<section id="metrics"><h2>Metrics</h2>${table(['quantity', 'value'], rows)}
<h3>Time per phase</h3>${phaseRows.length ? table(['phase', 'time'], phaseRows) : '<p class="note">No phase time recorded.</p>'}</section>`;
}

export interface ChartBlock {
  id: string;
  title: string;
  /** Null when the run has no readings of this quantity. */
  present: boolean;
}

export function chartsSection(blocks: ChartBlock[]): string {
  const parts = blocks.map((b) =>
    b.present
      ? `<figure class="chart" id="fig-${b.id}"><figcaption><h3>${e(b.title)}</h3></figcaption><div class="chart-box"><canvas id="${b.id}" role="img" aria-label="${e(
          b.title,
        )} over time, phases shaded"></canvas></div></figure>`
      : `<div class="chart" id="fig-${b.id}"><h3>${e(b.title)}</h3><p class="note">No readings of this quantity in the run.</p></div>`,
  );
  return `<section id="charts"><h2>Charts</h2><p class="note">Phases are shaded with the same hatch as in the app (named in the phase timeline above); alarm onsets are marked; dashed lines are profile limits.</p>${parts.join('')}</section>`;
}

export function alarmsSection(events: readonly EngineEvent[]): string {
  const clears = events.filter((x) => x.type === 'alarm-clear');
  const alarms = events.filter((x): x is AlarmEvent => x.type === 'alarm');
  if (alarms.length === 0)
    return `<section id="alarms"><h2>Alarms</h2><p class="note">No alarm was raised.</p></section>`;
  const rows = alarms.map((a) => {
    const clear = clears.find((c) => c.code === a.code && c.t >= a.t);
    return [
      clock(a.t),
      `<span class="level-${a.level}">${e(a.level)}</span>`,
      e(a.code),
      e(a.message),
      clear ? clock(clear.t) : 'not cleared',
    ];
  });
  return `<section id="alarms"><h2>Alarms</h2>${table(['at (h:mm:ss)', 'level', 'code', 'message', 'cleared'], rows)}</section>`;
}

export function gapsSection(gaps: GapRow[]): string {
  if (gaps.length === 0)
    return `<section id="gaps"><h2>Gaps</h2><p class="note">No telemetry gap longer than the silence limit was recorded (a contact that drops the charge current is an alarm, not a gap).</p></section>`;
  const rows = gaps.map((g) => [
    clock(g.t),
    g.endT === null ? '—' : clock(g.endT),
    g.endT === null ? '—' : duration(g.endT - g.t),
    e(g.reason),
  ]);
  return `<section id="gaps"><h2>Gaps</h2>${table(['from (h:mm:ss)', 'to', 'length', 'what'], rows)}</section>`;
}

export function diagnosisSection(d: Diagnosis): string {
  const causes = d.causes.map(
    (c, i) => `<article class="cause" id="cause-${e(c.code)}">
<h3>${i + 1}. ${e(c.code)} <span class="confidence">${Math.round(c.confidence * 100)} % confidence<span class="bar" style="width:${Math.round(
      c.confidence * 120,
    )}px" aria-hidden="true"></span></span></h3>
${c.evidence.length ? `<p><strong>Evidence</strong></p><ul>${c.evidence.map((x) => `<li>${e(x)}</li>`).join('')}</ul>` : ''}
${c.next.length ? `<p><strong>Next steps</strong></p><ol>${c.next.map((x) => `<li>${e(x)}</li>`).join('')}</ol>` : ''}
</article>`,
  );
  return `<section id="diagnosis"><h2>Diagnosis</h2>
<p>Diagnosed at ${clock(d.t)} (${d.t} s since the first sample). Causes are ranked by confidence, a score from 0 to 100 %, not a probability.</p>
${causes.length ? causes.join('') : '<p class="note">No cause found: nothing in the history points at a fault.</p>'}
</section>`;
}

export function footer(version: string, generatedAt: Date): string {
  return `<footer id="report-footer">Made by Taperline ${e(version)} on ${e(generatedAt.toISOString())}. Times are h:mm:ss since the run's first sample.</footer>`;
}
