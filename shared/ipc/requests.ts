/** Runtime-validated request schemas (zod). Anything not matching is refused with the reason. */
import { z } from 'zod';
import { connectableSourceSchema, stationSchema } from '../sources/schemas';

/**
 * A station that exists: an id a person gave, or a remote station's `<bench>/<station>`
 * (one `/`; no part starts with a dot, so no path climbs out of anything).
 */
const stationId = z
  .string()
  .min(1)
  .max(130)
  .regex(
    /^[A-Za-z0-9_-][A-Za-z0-9._:-]*(\/[A-Za-z0-9_-][A-Za-z0-9._:-]*)?$/,
    'letters, digits, . _ - : and one / (bench/station), not starting with a dot',
  )
  // Ids end up in file names and topic paths: no `..` segment may climb out of them.
  .refine((id) => !id.split('/').includes('..'), 'no ".." segment');
/** The id of a new station added from the Connect view. */
const newStationId = z
  .string()
  .min(1)
  .max(64)
  .regex(/^[A-Za-z0-9._-]+$/, 'letters, digits, . _ - only');
const runId = z.number().int().positive();
const lineEnding = z.enum(['\n', '\r\n', '\r', '']);
const seriesField = z.enum(['vbatV', 'ibatA', 'tempC', 'vinV', 'iinA']);
/** Profile JSON is validated by the chemistry layer, which names the bad key. */
const profileJson = z.unknown();

/** A station as the Connect view asks for it: the kinds a person can pick (shared/sources). */
export const stationConfigSchema = stationSchema
  .extend({ id: newStationId, source: connectableSourceSchema })
  .strict();

const window = { fromT: z.number().min(0), toT: z.number().min(0) };

/** Every request method with the schema of its params. */
export const requestSchemas = {
  'stations.list': z.object({}).strict(),
  'stations.add': z.object({ config: stationConfigSchema }).strict(),
  'stations.remove': z.object({ stationId }).strict(),
  'stations.send': z.object({ stationId, text: z.string().max(4096), ending: lineEnding }).strict(),
  'stations.setProfile': z.object({ stationId, profile: profileJson }).strict(),
  /** Recent history of a live station for a view that opens late: samples and events. */
  'stations.history': z.object({ stationId, fromT: z.number().min(0).optional() }).strict(),
  'stations.ackAlarm': z.object({ stationId, code: z.string().max(64), t: z.number() }).strict(),
  'stations.diagnose': z.object({ stationId, atT: z.number().min(0).optional() }).strict(),
  /** Sweep view: start (or stop) the live source sweep of a station; answered with the latest. */
  'stations.sweep': z.object({ stationId, watch: z.boolean() }).strict(),
  /** Sweep view: write a found voltage into the station's profile as its input set point. */
  'stations.setInputSetpoint': z
    .object({ stationId, inputSetpointV: z.number().positive().max(1000) })
    .strict(),
  /** The board under test: typed or scanned id (a new id starts a new run), operator, batch. */
  'stations.setBoard': z
    .object({
      stationId,
      boardId: z
        .string()
        .regex(/^[!-~]{1,64}$/, '1-64 printable characters without spaces')
        .nullable()
        .optional(),
      operator: z.string().max(120).nullable().optional(),
      batchId: z
        .string()
        .regex(/^[!-~]{1,64}$/, '1-64 printable characters without spaces')
        .nullable()
        .optional(),
    })
    .strict(),
  /** Start a burn-in batch: every live station begins a new run of this batch. */
  'stations.startBatch': z
    .object({ batchId: z.string().regex(/^[!-~]{1,64}$/, '1-64 printable characters without spaces') })
    .strict(),
  /** The station's latest board checks (also pushed as `checks`). */
  'stations.checks': z.object({ stationId }).strict(),
  'ports.list': z.object({}).strict(),
  'scenarios.list': z.object({}).strict(),
  'profile.validate': z.object({ profile: profileJson }).strict(),
  /** Parse sample lines with a draft profile, for the live preview of a field mapping. */
  'profile.preview': z
    .object({ profile: profileJson, lines: z.array(z.string().max(4096)).max(200) })
    .strict(),
  'runs.list': z.object({}).strict(),
  'runs.get': z.object({ runId }).strict(),
  'runs.overview': z
    .object({
      runId,
      // At most the five series, each once: a repeated field is dropped, not queried twice.
      fields: z
        .array(seriesField)
        .min(1)
        .max(5)
        .transform((fields) => [...new Set(fields)]),
      ...window,
      buckets: z.number().int().min(1).max(10_000),
    })
    .strict(),
  'runs.samples': z
    .object({ runId, ...window, limit: z.number().int().min(1).max(200_000).optional() })
    .strict(),
  'runs.events': z.object({ runId }).strict(),
  'runs.lines': z
    .object({ runId, afterRxS: z.number().optional(), limit: z.number().int().min(1).max(10_000).optional() })
    .strict(),
  'runs.delete': z.object({ runId }).strict(),
  'runs.diagnose': z.object({ runId, atT: z.number().min(0).optional() }).strict(),
  /** A recorded run judged against its profile's expect ranges (the `taperline check` JSON). */
  'runs.checks': z.object({ runId }).strict(),
  /** CSV export: Electron asks where to save; the web mode answers with a download URL. */
  'runs.exportCsv': z.object({ runId }).strict(),
  /** Run report (self-contained HTML): saved (Electron) or a download URL (web). */
  'runs.report': z.object({ runId, pdf: z.boolean().optional() }).strict(),
  /**
   * The Batch report of a burn-in batch (every recorded run of it judged against its profile's
   * expect ranges): HTML, or with `csv` the batch table; saved (Electron) or a download URL (web).
   */
  'batches.report': z
    .object({
      batchId: z.string().regex(/^[!-~]{1,64}$/, '1-64 printable characters without spaces'),
      csv: z.boolean().optional(),
    })
    .strict(),
  /** Replay a recorded run as a new simulated-time station (read again through the pipeline). */
  'runs.replay': z
    .object({ runId, speed: z.union([z.number().positive().max(100_000), z.literal('max')]) })
    .strict(),
} as const;

export type RequestMethod = keyof typeof requestSchemas;
export type RequestParams<M extends RequestMethod> = z.infer<(typeof requestSchemas)[M]>;

export const requestEnvelopeSchema = z
  .object({
    id: z.number().int().nonnegative(),
    method: z.string().max(64),
    // Methods without parameters may leave them out; absent is read as {}.
    params: z.unknown().optional(),
  })
  .strict();

export type RequestEnvelope = z.infer<typeof requestEnvelopeSchema>;

export type ReplyEnvelope =
  { id: number; ok: true; result: unknown } | { id: number; ok: false; error: string };

/**
 * Validate one incoming request. Returns the typed method and params, or an error that names
 * the bad field, for a reply the renderer can show.
 */
export function validateRequest(
  raw: unknown,
):
  | { ok: true; id: number; method: RequestMethod; params: unknown }
  | { ok: false; id: number | null; error: string } {
  const envelope = requestEnvelopeSchema.safeParse(raw);
  if (!envelope.success)
    return { ok: false, id: null, error: `bad request envelope: ${formatIssues(envelope.error)}` };
  const { id, method } = envelope.data;
  if (!Object.hasOwn(requestSchemas, method)) return { ok: false, id, error: `unknown method "${method}"` };
  const schema = requestSchemas[method as RequestMethod];
  const params = schema.safeParse(envelope.data.params ?? {});
  if (!params.success) return { ok: false, id, error: `${method}: ${formatIssues(params.error)}` };
  return { ok: true, id, method: method as RequestMethod, params: params.data };
}

function formatIssues(error: z.ZodError): string {
  return error.issues
    .slice(0, 3)
    .map((issue) => `${issue.path.length ? issue.path.join('.') : '(root)'}: ${issue.message}`)
    .join('; ');
}
