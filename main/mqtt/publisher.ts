/**
 * `record --publish mqtt://HOST[:PORT]/PREFIX`: publishes every station of this bench to a
 * broker (topics: shared/sources/mqtt-topics.ts). Samples go in batches of at most
 * BATCH_MS; phase and status are retained; everything is QoS 1. While the broker is away
 * MQTT.js keeps the messages in its queue and sends them when it is back, so the bench keeps
 * recording locally and nothing is lost (the queue is bounded: past MAX_QUEUED batches the
 * oldest are dropped and counted).
 */
import { connect, type MqttClient } from 'mqtt';
import type { EngineEvent, TimedSample } from '@shared/engine/types';
import {
  benchTopic,
  parseBrokerUrl,
  stationTopic,
  type PublishedSample,
  type SamplesPayload,
  type StatusPayload,
} from '@shared/sources/mqtt-topics';
import type { StationManager, StationSnapshot } from '../station/types';

/** Samples are gathered this long before a batch is published (10 Hz → 2–3 samples a batch). */
export const BATCH_MS = 250;
/** Batches kept for a broker that is away: 30 min of 16 stations at 4 batches a second. */
export const MAX_QUEUED = 16 * 4 * 1800;

export interface PublisherStats {
  connected: boolean;
  published: number;
  acknowledged: number;
  dropped: number;
}

export interface Publisher {
  stats(): PublisherStats;
  /** Call after the stations closed, so their last samples are published too. */
  stop(): Promise<void>;
}

function toPublished(s: TimedSample): PublishedSample {
  const out: PublishedSample = { rxS: s.rxS, t: s.t };
  if (s.deviceS !== undefined) out.deviceS = s.deviceS;
  for (const key of ['vbatV', 'ibatA', 'tempC', 'vinV', 'iinA'] as const)
    if (s[key] !== undefined && Number.isFinite(s[key])) out[key] = s[key];
  if (s.chg !== undefined) out.chg = s.chg;
  if (s.flt !== undefined) out.flt = s.flt;
  if (s.src !== undefined) out.src = s.src;
  return out;
}

export async function startPublisher(
  url: string,
  options: {
    bench: string;
    stations: StationManager;
    /** The profile JSON a station was started with (null = assumed). */
    profileOf: (stationId: string) => unknown;
    onNote?: (message: string) => void;
  },
): Promise<Publisher> {
  const parsed = parseBrokerUrl(url);
  if (!parsed) throw new Error(`"${url}" is not a broker address: write mqtt://HOST[:PORT]/PREFIX`);
  const { brokerUrl, prefix } = parsed;
  const { bench, stations } = options;
  const note = options.onNote ?? (() => {});
  const session = Date.now() / 1000;
  const online = benchTopic(prefix, bench);
  const client: MqttClient = connect(brokerUrl, {
    // A persistent session: messages sent but not yet acknowledged when the broker went away
    // are sent again when it is back (MQTT 3.1.1 section 4.4).
    clientId: `taperline-bench-${bench}-${process.pid}`.slice(0, 64),
    clean: false,
    reconnectPeriod: 1000,
    connectTimeout: 5000,
    queueQoSZero: false,
    will: { topic: online, payload: Buffer.from(JSON.stringify({ online: false })), qos: 1, retain: true },
  });
  const stats: PublisherStats = { connected: false, published: 0, acknowledged: 0, dropped: 0 };
  const batches = new Map<string, PublishedSample[]>();
  const seqs = new Map<string, number>();
  let inFlight = 0;
  let saidAway = false;

  const publish = (topic: string, body: unknown, retain = false) => {
    if (inFlight >= MAX_QUEUED) {
      stats.dropped++;
      return;
    }
    inFlight++;
    stats.published++;
    client.publish(topic, JSON.stringify(body), { qos: 1, retain }, (err) => {
      inFlight--;
      if (!err) stats.acknowledged++;
      else stats.dropped++;
    });
  };

  const publishStatus = (s: StationSnapshot) =>
    publish(
      stationTopic(prefix, bench, s.id, 'status'),
      {
        label: s.label,
        source: { state: s.source.state, detail: s.source.detail },
        profile: options.profileOf(s.id) ?? null,
        runId: s.runId,
        rxS: Date.now() / 1000,
      } satisfies StatusPayload,
      true,
    );

  client.on('connect', () => {
    stats.connected = true;
    if (saidAway) note(`broker ${brokerUrl} is back; sending what was kept`);
    saidAway = false;
    client.publish(online, JSON.stringify({ online: true, rxS: Date.now() / 1000 }), {
      qos: 1,
      retain: true,
    });
  });
  const away = (why: string) => {
    stats.connected = false;
    if (!saidAway)
      note(
        `broker ${brokerUrl} is not reachable (${why}); recording goes on here and batches are kept for it`,
      );
    saidAway = true;
  };
  client.on('offline', () => away('offline'));
  client.on('error', (err) => away(err.message));

  const flush = () => {
    for (const [stationId, samples] of batches) {
      if (samples.length === 0) continue;
      const seq = (seqs.get(stationId) ?? 0) + 1;
      seqs.set(stationId, seq);
      publish(stationTopic(prefix, bench, stationId, 'samples'), {
        session,
        seq,
        samples,
      } satisfies SamplesPayload);
      batches.set(stationId, []);
    }
  };
  const timer = setInterval(flush, BATCH_MS);

  const onSample = ({ stationId, sample }: { stationId: string; sample: TimedSample }) => {
    let batch = batches.get(stationId);
    if (!batch) batches.set(stationId, (batch = []));
    batch.push(toPublished(sample));
  };
  const onEvent = ({ stationId, event }: { stationId: string; event: EngineEvent }) => {
    if (event.type === 'phase') {
      // Samples before the phase change go first, so a subscriber sees them in order.
      flush();
      publish(stationTopic(prefix, bench, stationId, 'phase'), { phase: event.phase, t: event.t }, true);
    } else if (event.type === 'alarm' || event.type === 'alarm-clear') {
      flush();
      publish(stationTopic(prefix, bench, stationId, 'alarms'), {
        type: event.type,
        t: event.t,
        code: event.code,
        ...(event.type === 'alarm' ? { level: event.level, message: event.message } : {}),
      });
    }
  };
  /** Stations seen, with their last label and run, for the closing status at stop. */
  const known = new Map<string, StationSnapshot>();
  const onStation = (s: StationSnapshot) => {
    known.set(s.id, s);
    publishStatus(s);
  };
  const onSource = ({ stationId }: { stationId: string }) => {
    const s = stations.get(stationId);
    if (s) onStation(s);
  };
  stations.on('sample', onSample);
  stations.on('event', onEvent);
  stations.on('station-added', onStation);
  stations.on('source', onSource);
  for (const s of stations.list()) onStation(s);

  return {
    stats: () => ({ ...stats }),
    async stop() {
      stations.off('sample', onSample);
      stations.off('event', onEvent);
      stations.off('station-added', onStation);
      stations.off('source', onSource);
      clearInterval(timer);
      flush();
      for (const s of known.values())
        publish(
          stationTopic(prefix, bench, s.id, 'status'),
          {
            label: s.label,
            source: { state: 'closed', detail: 'the bench stopped recording' },
            profile: options.profileOf(s.id) ?? null,
            runId: s.runId,
            rxS: Date.now() / 1000,
          } satisfies StatusPayload,
          true,
        );
      if (client.connected)
        client.publish(online, JSON.stringify({ online: false, rxS: Date.now() / 1000 }), {
          qos: 1,
          retain: true,
        });
      // Give queued batches a few seconds to reach a broker that is there, then go.
      const deadline = Date.now() + 5000;
      while (inFlight > 0 && client.connected && Date.now() < deadline)
        await new Promise((r) => setTimeout(r, 50));
      await client.endAsync(inFlight > 0);
    },
  };
}
