/**
 * Decoders for the parts of replies and pushes the renderer reads.
 *
 * The payload types are those of shared/ipc/payloads.ts, the same the backend builds. Data
 * from a socket is not trusted blindly: each payload is checked here at the edge with zod,
 * for exactly the fields the views read; everything else passes through.
 */
import { z } from 'zod';
import type { ResolvedProfile } from '@shared/chemistry/types';
import type { EngineEvent, RunState } from '@shared/engine/types';
import type {
  FeedLine,
  OverviewBucket,
  RunRow,
  SeriesField,
  SourceStatus,
  StationSnapshot,
} from '@shared/ipc/payloads';

const sourceStatus = z.looseObject({
  state: z.enum(['connecting', 'open', 'lost', 'closed']),
  detail: z.string(),
});

const snapshotSchema = z.looseObject({
  id: z.string(),
  label: z.string(),
  sourceLabel: z.string(),
  source: sourceStatus,
  runId: z.number().nullable(),
  profile: z.looseObject({ name: z.string(), chemistry: z.string(), cells: z.number() }),
  state: z.looseObject({
    t: z.number(),
    phase: z.string(),
    phaseSinceT: z.number(),
    activeAlarms: z.array(z.unknown()),
  }),
  lines: z.number(),
  rejected: z.number(),
  recording: z.looseObject({ ok: z.boolean(), problem: z.string().nullable() }),
});

export type StationView = StationSnapshot;

export function readStation(raw: unknown): StationView {
  const parsed = snapshotSchema.parse(raw);
  return {
    ...parsed,
    source: parsed.source as SourceStatus,
    profile: parsed.profile as unknown as ResolvedProfile,
    state: parsed.state as unknown as RunState,
  };
}

export function readStations(raw: unknown): StationView[] {
  const list = Array.isArray(raw)
    ? raw
    : z.looseObject({ stations: z.array(z.unknown()) }).parse(raw).stations;
  return list.map(readStation);
}

const feedLineSchema = z.looseObject({
  rxS: z.number(),
  text: z.string(),
  kind: z.enum(['sample', 'header', 'firmware', 'blank', 'rejected', 'sent']),
  reason: z.string().optional(),
  detail: z.string().optional(),
});

export type FeedRow = FeedLine;

export function readFeedLines(raw: unknown): FeedRow[] {
  return z.array(feedLineSchema).parse(raw) as FeedRow[];
}

const checkSchema = z.looseObject({
  code: z.string(),
  measured: z.number().nullable(),
  min: z.number(),
  max: z.number(),
  unit: z.string(),
  result: z.enum(['pass', 'fail', 'not-measured']),
  note: z.string(),
});
const checksSchema = z.looseObject({
  verdict: z.enum(['pass', 'fail', 'incomplete']),
  checks: z.array(checkSchema),
  board: z.string().nullable(),
  fault: z.looseObject({ t: z.number(), what: z.string() }).nullable().optional(),
});

/** A run's board checks (the `taperline check` JSON) as the views read it. */
export type ChecksView = z.infer<typeof checksSchema>;

export function readChecks(raw: unknown): ChecksView | null {
  return raw === null || raw === undefined ? null : checksSchema.parse(raw);
}

const runRowSchema = z.looseObject({
  id: z.number(),
  stationId: z.string(),
  stationLabel: z.string(),
  profileName: z.string(),
  chemistry: z.string(),
  startRxS: z.number(),
  endRxS: z.number().nullable(),
  endReason: z.string().nullable(),
  durationS: z.number(),
  ah: z.number(),
  wh: z.number(),
  lines: z.number(),
  rejected: z.number(),
  boardId: z.string().nullish(),
  operator: z.string().nullish(),
  firmware: z.string().nullish(),
  batchId: z.string().nullish(),
  verdict: z.enum(['pass', 'fail', 'incomplete']).nullish(),
  internalResistanceOhm: z.number().nullish(),
});

export type RunListRow = RunRow;

export function readRuns(raw: unknown): RunListRow[] {
  const list = Array.isArray(raw) ? raw : z.looseObject({ runs: z.array(z.unknown()) }).parse(raw).runs;
  return list.map((row) => runRowSchema.parse(row) as RunRow);
}

export function readRun(raw: unknown): RunListRow {
  return runRowSchema.parse(
    raw && typeof raw === 'object' && 'run' in raw ? (raw as { run: unknown }).run : raw,
  ) as RunRow;
}

const stats = z.looseObject({ min: z.number(), max: z.number(), mean: z.number() });
const bucketSchema = z.looseObject({
  t0S: z.number(),
  t1S: z.number(),
  count: z.number(),
  values: z.record(z.string(), stats.optional()),
});
export type Bucket = OverviewBucket;
export type { SeriesField };

export function readBuckets(raw: unknown): Bucket[] {
  const list = Array.isArray(raw) ? raw : z.looseObject({ buckets: z.array(z.unknown()) }).parse(raw).buckets;
  return list.map((b) => bucketSchema.parse(b) as Bucket);
}

/** A recorded or historic sample as the charts read it (TimedSample fields, all optional). */
export interface PlotSample {
  t: number;
  vbatV?: number | null;
  ibatA?: number | null;
  tempC?: number | null;
  vinV?: number | null;
  iinA?: number | null;
}

const plotSampleSchema = z.looseObject({
  t: z.number(),
  vbatV: z.number().nullish(),
  ibatA: z.number().nullish(),
  tempC: z.number().nullish(),
  vinV: z.number().nullish(),
  iinA: z.number().nullish(),
});

/** Samples arrive either as TimedSample objects or as a column batch (SampleBatch). */
export function readSamples(raw: unknown): PlotSample[] {
  if (raw && typeof raw === 'object' && !Array.isArray(raw)) {
    const obj = raw as Record<string, unknown>;
    if (Array.isArray(obj.tS)) return columnsToSamples(obj);
    if (Array.isArray(obj.samples)) return readSamples(obj.samples);
    if (obj.samples && typeof obj.samples === 'object') return readSamples(obj.samples);
  }
  return z.array(plotSampleSchema).parse(raw) as PlotSample[];
}

function columnsToSamples(obj: Record<string, unknown>): PlotSample[] {
  const tS = obj.tS as number[];
  const col = (name: string) => (Array.isArray(obj[name]) ? (obj[name] as (number | null)[]) : []);
  const [vbat, ibat, temp, vin, iin] = ['vbatV', 'ibatA', 'tempC', 'vinV', 'iinA'].map(col);
  return tS.map((t, i) => ({
    t,
    vbatV: vbat[i],
    ibatA: ibat[i],
    tempC: temp[i],
    vinV: vin[i],
    iinA: iin[i],
  }));
}

const eventSchema = z.looseObject({ type: z.enum(['phase', 'alarm', 'alarm-clear', 'gap']), t: z.number() });

export function readEvents(raw: unknown): EngineEvent[] {
  const list = Array.isArray(raw) ? raw : z.looseObject({ events: z.array(z.unknown()) }).parse(raw).events;
  return list.map((e) => eventSchema.parse(e) as unknown as EngineEvent);
}

const causeSchema = z.looseObject({
  code: z.string(),
  confidence: z.number(),
  evidence: z.array(z.string()),
  next: z.array(z.string()),
});
const diagnosisSchema = z.looseObject({ t: z.number(), causes: z.array(causeSchema) });
export type Diagnosis = z.infer<typeof diagnosisSchema>;

export function readDiagnosis(raw: unknown): Diagnosis {
  return diagnosisSchema.parse(raw);
}

/** Error text of a failed request, for a person to read. */
export function errorText(err: unknown): string {
  return err instanceof Error ? err.message : String(err);
}
