/**
 * Topics and payloads of a bench published through an MQTT broker (`record --publish`,
 * `serve --subscribe`). Documented in the README so other tools can subscribe too.
 *
 *   PREFIX/<bench>/online             retained  {"online":true,"rxS":…}; the broker publishes
 *                                              {"online":false} (last will) when the bench drops
 *   PREFIX/<bench>/<station>/status   retained  station label, source state, profile JSON, run id
 *   PREFIX/<bench>/<station>/samples            a batch of samples with a sequence number
 *   PREFIX/<bench>/<station>/phase    retained  the current phase and when it began
 *   PREFIX/<bench>/<station>/alarms             one alarm raised or cleared
 *
 * Every message is JSON, published with QoS 1. `<station>` is the station id with characters
 * MQTT reserves (`/ + #`) replaced by `_`.
 */
import { z } from 'zod';

export const TOPIC_LEAVES = ['status', 'samples', 'phase', 'alarms'] as const;
export type TopicLeaf = (typeof TOPIC_LEAVES)[number];

/** A name usable as one topic level: no `/`, `+`, `#` or NUL, never empty. */
export function topicLevel(name: string): string {
  const clean = name.replace(/[/+#]/g, '_').split(String.fromCharCode(0)).join('_');
  return clean.length > 0 ? clean : '_';
}

export function benchTopic(prefix: string, bench: string): string {
  return `${prefix}/${topicLevel(bench)}/online`;
}

export function stationTopic(prefix: string, bench: string, station: string, leaf: TopicLeaf): string {
  return `${prefix}/${topicLevel(bench)}/${topicLevel(station)}/${leaf}`;
}

/** Splits a received topic under `prefix`; null for anything else. */
export function parseTopic(
  prefix: string,
  topic: string,
): { bench: string; station: string; leaf: TopicLeaf } | { bench: string; leaf: 'online' } | null {
  if (!topic.startsWith(`${prefix}/`)) return null;
  const parts = topic.slice(prefix.length + 1).split('/');
  if (parts.length === 2 && parts[1] === 'online' && parts[0]) return { bench: parts[0], leaf: 'online' };
  if (parts.length !== 3 || !parts[0] || !parts[1]) return null;
  const leaf = parts[2] as TopicLeaf;
  return TOPIC_LEAVES.includes(leaf) ? { bench: parts[0], station: parts[1], leaf } : null;
}

export const onlinePayload = z.object({ online: z.boolean(), rxS: z.number().optional() });

const sourceStatus = z.object({
  state: z.enum(['connecting', 'open', 'lost', 'closed']),
  detail: z.string(),
});

export const statusPayload = z.object({
  label: z.string(),
  source: sourceStatus,
  /** The profile JSON the bench charges with (null = assumed there from the first pack voltage). */
  profile: z.unknown(),
  runId: z.number().nullable(),
  rxS: z.number(),
});

/** One sample in canonical units (the fields of the telemetry table), bench receive time `rxS`. */
export const publishedSample = z.object({
  rxS: z.number(),
  /** Device time of the line, when it carried `t`. */
  deviceS: z.number().optional(),
  /** Seconds since the run's first sample, on the run's clock. */
  t: z.number(),
  vbatV: z.number().optional(),
  ibatA: z.number().optional(),
  tempC: z.number().optional(),
  vinV: z.number().optional(),
  iinA: z.number().optional(),
  chg: z.boolean().optional(),
  flt: z.boolean().optional(),
  src: z.enum(['panel', 'adapter', 'none']).optional(),
});

export const samplesPayload = z.object({
  /** The publishing process's start, seconds since the epoch: `seq` counts from 1 within it. */
  session: z.number(),
  /** Batch number per station: a jump means batches were lost. */
  seq: z.number().int().positive(),
  samples: z.array(publishedSample),
});

export const phasePayload = z.object({ phase: z.string(), t: z.number() });

export const alarmPayload = z.object({
  type: z.enum(['alarm', 'alarm-clear']),
  t: z.number(),
  code: z.string(),
  level: z.string().optional(),
  message: z.string().optional(),
});

export type StatusPayload = z.infer<typeof statusPayload>;
export type SamplesPayload = z.infer<typeof samplesPayload>;
export type PublishedSample = z.infer<typeof publishedSample>;

/** `mqtt://HOST[:PORT]/PREFIX` → the broker URL and the topic prefix. */
export function parseBrokerUrl(text: string): { brokerUrl: string; prefix: string } | null {
  const match = /^(mqtts?):\/\/([^/\s]+)\/([^\s#+]+?)\/?$/.exec(text.trim());
  if (!match) return null;
  return { brokerUrl: `${match[1]}://${match[2]}`, prefix: match[3]! };
}
