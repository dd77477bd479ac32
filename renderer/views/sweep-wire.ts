/**
 * Decoder of the `sweep` push and of the `stations.sweep` reply (SweepPayload of
 * shared/ipc/payloads.ts), checked at the edge with zod for the fields the Sweep view reads.
 */
import { z } from 'zod';
import type { SweepPayload } from '@shared/ipc/payloads';

const num = z.number();
const span = z.looseObject({ fromS: num, toS: num });

const reportSchema = z.looseObject({
  ok: z.boolean(),
  reason: z.string().nullable(),
  mppV: num.nullable(),
  mppW: num.nullable(),
  setpointV: num.nullable(),
  operatingV: num.nullable(),
  lossPct: num.nullable(),
  fit: z.looseObject({ points: num, rmsW: num, model: z.enum(['single-diode', 'smooth']) }).nullable(),
  advice: z.string().nullable(),
  window: span.nullable(),
  sweeps: num,
  irradiance: z
    .looseObject({
      changed: z.boolean(),
      changePct: num,
      evidence: z.string().nullable(),
      restartedOn: span.nullable(),
    })
    .nullable(),
  temperature: z.looseObject({ text: z.string() }).nullable(),
  day: z.looseObject({ efficiency: num.nullable(), coverage: num, sweeps: num }).nullable(),
  curve: z.array(z.looseObject({ vV: num, pW: num })),
  refused: z.array(z.looseObject({ fromS: num, toS: num, reason: z.string() })),
});

const payloadSchema = z.looseObject({
  stationId: z.string(),
  points: z.looseObject({ tS: z.array(num), vV: z.array(num), pW: z.array(num) }),
  report: reportSchema,
});

export function readSweep(raw: unknown): SweepPayload {
  return payloadSchema.parse(raw) as unknown as SweepPayload;
}
