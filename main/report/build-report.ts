/**
 * The Run report: ONE self-contained HTML file (inline CSS, data as JSON, and the dashboard's
 * own chart modules bundled with Chart.js and inlined), readable on screen and in print, that
 * makes no external request. Scripts run only with the page's one-time nonce.
 */
import type { ResolvedProfile } from '@shared/chemistry/types';
import type { Diagnosis } from '@shared/engine/diagnosis';
import type { EngineEvent, RunMetrics, RunSummary, TimedSample } from '@shared/engine/types';
import { reportChartsSource, taperlineVersion } from './assets';
import { decimateColumns, seriesColumns } from './decimate';
import { jsonForScript, reportHead, reportScripts } from './html';
import { gapRows, phaseSegments, reportMetrics } from './metrics';
import {
  alarmsSection,
  chartsSection,
  diagnosisSection,
  footer,
  gapsSection,
  metricsSection,
  profileSection,
  timelineSection,
  titleSection,
  type ChartBlock,
} from './sections';
import { REPORT_CSS } from './styles';
import type { CheckReport } from '@shared/engine/checks';
import { CHECKS_CSS, checksSection, type RunIdentity } from './checks-section';

export interface RunReportInput {
  profile: ResolvedProfile;
  samples: readonly TimedSample[];
  events: readonly EngineEvent[];
  /** The pipeline's summary at the end of the run. */
  summary: RunSummary;
  /** The engine's metrics at the end of the run (`pipeline.state().metrics`). */
  metrics: RunMetrics;
  diagnosis: Diagnosis;
  title?: string;
  /** Where the run came from, e.g. a file name or `run 3 of bench.sqlite`. */
  source?: string;
  /** The run judged against the board's design (profile `expect`); null when it has none. */
  checks?: CheckReport | null;
  /** The board under test: id, operator, firmware version (from the station or a `#` line). */
  boardUnderTest?: RunIdentity;
  /** Generation time for the footer; now when omitted. */
  generatedAt?: Date;
}

/** Points per series handed to a chart (the chart draws no more than this). */
const CHART_POINTS = 2000;

interface SeriesSpec {
  label: string;
  axis: string;
  color: string;
  dash?: number[];
  xy: (number | null)[];
}
interface ChartSpec {
  id: string;
  axes: { id: string; title: string }[];
  series: SeriesSpec[];
}

// Taperline's own palette: one hue per physical quantity, dashed lines for profile limits.
const COLOR = {
  voltage: '#1f5f7a',
  current: '#b5651d',
  temperature: '#a3302a',
  source: '#5b6b2f',
  sourceI: '#6a4c93',
};

export function buildRunReportHtml(input: RunReportInput): string {
  const { profile, samples, events, summary, diagnosis } = input;
  const startT = samples.length ? samples[0].t : 0;
  const endT = Math.max(samples.length ? samples[samples.length - 1].t : 0, startT);
  const segments = phaseSegments(events, endT);
  const metrics = reportMetrics(samples, summary, input.metrics);
  const gaps = gapRows(profile, samples, events);
  const breakS = Math.max(profile.silenceS, 10);
  const line = (pick: (s: TimedSample) => number | undefined) =>
    decimateColumns(seriesColumns(samples, pick, breakS), CHART_POINTS);
  const flat = (y: number): (number | null)[] => [startT, y, endT, y];
  const cells = profile.cells;

  const charts: ChartSpec[] = [];
  const blocks: ChartBlock[] = [];
  const add = (id: string, title: string, spec: Omit<ChartSpec, 'id'>) => {
    const present = spec.series.some((s) => s.xy.length >= 4 && !s.dash);
    blocks.push({ id, title, present });
    if (present) charts.push({ id, ...spec });
  };
  add('chart-voltage', 'Pack voltage (V)', {
    axes: [{ id: 'y', title: 'pack voltage (V)' }],
    series: [
      { label: 'pack voltage', axis: 'y', color: COLOR.voltage, xy: line((s) => s.vbatV) },
      {
        label: 'regulation',
        axis: 'y',
        color: '#444',
        dash: [6, 4],
        xy: flat(profile.regulationVPerCell * cells),
      },
      {
        label: 'overvoltage limit',
        axis: 'y',
        color: '#a32020',
        dash: [2, 3],
        xy: flat(profile.overvoltageVPerCell * cells),
      },
    ],
  });
  add('chart-current', 'Charge current (A)', {
    axes: [{ id: 'y', title: 'charge current (A)' }],
    series: [
      { label: 'charge current', axis: 'y', color: COLOR.current, xy: line((s) => s.ibatA) },
      { label: 'set point', axis: 'y', color: '#444', dash: [6, 4], xy: flat(profile.chargeCurrentA) },
      { label: 'termination', axis: 'y', color: '#777', dash: [2, 3], xy: flat(profile.terminationA) },
    ],
  });
  add('chart-temperature', 'Temperature (°C)', {
    axes: [{ id: 'y', title: 'pack temperature (°C)' }],
    series: [
      { label: 'pack temperature', axis: 'y', color: COLOR.temperature, xy: line((s) => s.tempC) },
      { label: 'window top', axis: 'y', color: '#a32020', dash: [6, 4], xy: flat(profile.tempWindowC[1]) },
      { label: 'window bottom', axis: 'y', color: '#1f5f7a', dash: [6, 4], xy: flat(profile.tempWindowC[0]) },
    ],
  });
  const sourceSeries: SeriesSpec[] = [
    { label: 'source voltage', axis: 'y', color: COLOR.source, xy: line((s) => s.vinV) },
    { label: 'source current', axis: 'y1', color: COLOR.sourceI, xy: line((s) => s.iinA) },
  ];
  if (profile.inputSetpointV !== null) {
    sourceSeries.push({
      label: 'input set point',
      axis: 'y',
      color: '#444',
      dash: [6, 4],
      xy: flat(profile.inputSetpointV),
    });
  }
  add('chart-source', 'Source: voltage (V) and current (A)', {
    axes: [
      { id: 'y', title: 'source voltage (V)' },
      { id: 'y1', title: 'source current (A)' },
    ],
    series: sourceSeries,
  });

  // Alarm onsets as the app's chart markers (same plugin, same inks).
  const markers = events.flatMap((e) =>
    e.type === 'alarm'
      ? [{ t: e.t, kind: e.level === 'critical' ? 'alarm-critical' : 'alarm-warn', label: e.code }]
      : [],
  );
  // Gap events as recorded: the chart bundle turns them into the app's gap bands (gap-spans.ts).
  const gapEvents = events.filter((e) => e.type === 'gap');
  const data = {
    startT,
    endT: endT > startT ? endT : startT + 1,
    phases: segments,
    markers,
    gapEvents,
    charts,
  };
  const scripts = reportScripts();
  const title = input.title ?? `Run report: ${profile.name}`;
  const generatedAt = input.generatedAt ?? new Date();
  return `<!doctype html>
<html lang="en">
${reportHead({ title, css: REPORT_CSS + CHECKS_CSS, version: taperlineVersion(), nonce: scripts.nonce })}
<body>
${titleSection(title, input.source, profile)}
${checksSection(input.checks ?? null, input.boardUnderTest ?? { board: null, operator: null, firmware: null })}
${profileSection(profile)}
${timelineSection(segments, startT, data.endT)}
${metricsSection(metrics)}
${chartsSection(blocks)}
${alarmsSection(events)}
${gapsSection(gaps)}
${diagnosisSection(diagnosis)}
${footer(taperlineVersion(), generatedAt)}
<script type="application/json" id="run-data">${jsonForScript(data)}</script>
${scripts.script(reportChartsSource())}
</body>
</html>
`;
}
