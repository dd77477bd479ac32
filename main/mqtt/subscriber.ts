/**
 * `serve --subscribe mqtt://HOST[:PORT]/PREFIX`: every station published under PREFIX
 * becomes a station here (id `<bench>/<station>`), fed by a `remote` line source and
 * recorded like a local one. The samples come back as canonical telemetry lines into the
 * same pipeline, so phases and alarms are found here by the same engine with the bench's
 * profile. A broker or bench that goes away is a `lost` status (the run records a gap), never
 * a crash; MQTT.js retries the broker every second.
 */
import { hostname } from 'node:os';
import { EventEmitter } from 'node:events';
import { connect, type MqttClient } from 'mqtt';
import { formatTelemetryLine, type LineValue } from '@shared/telemetry/format-line';
import {
  onlinePayload,
  parseBrokerUrl,
  parseTopic,
  samplesPayload,
  statusPayload,
  type PublishedSample,
} from '@shared/sources/mqtt-topics';
import type { RemoteSourceConfig } from '@shared/sources/schemas';
import type { LineSource, LineSourceEvents, SourceStatus } from '../sources/types';
import type { StationManager } from '../station/types';

export interface Subscriber {
  sourceFor(config: RemoteSourceConfig): LineSource;
  /** Batches missing from the sequence numbers, per station id (lost for good). */
  lostBatches(): Record<string, number>;
  stop(): Promise<void>;
}

/** One sample as a canonical key=value line (device time `t` when the bench had it). */
export function sampleLine(s: PublishedSample): string {
  const values: Record<string, LineValue> = {};
  if (s.deviceS !== undefined) values.t = s.deviceS;
  if (s.vbatV !== undefined) values.vbat = s.vbatV;
  if (s.ibatA !== undefined) values.ibat = s.ibatA;
  if (s.tempC !== undefined) values.temp = s.tempC;
  if (s.vinV !== undefined) values.vin = s.vinV;
  if (s.iinA !== undefined) values.iin = s.iinA;
  if (s.chg !== undefined) values.chg = s.chg;
  if (s.flt !== undefined) values.flt = s.flt;
  if (s.src !== undefined) values.src = s.src;
  return formatTelemetryLine(values, 'kv');
}

/** The bench's profile for canonical lines: its field mapping is the bench's business. */
function centralProfile(profile: unknown): unknown {
  if (profile === null || typeof profile !== 'object' || Array.isArray(profile)) return null;
  const { fields: _fields, ...rest } = profile as Record<string, unknown>;
  return rest;
}

/** Lines kept for a remote station whose station is still being added. */
const MAX_EARLY_LINES = 10_000;
/** How long a batch after a missing one waits for it (QoS 1 resends may come out of order). */
export const REORDER_WAIT_MS = 5000;

class RemoteSource extends EventEmitter<LineSourceEvents> implements LineSource {
  readonly label: string;
  status: SourceStatus = { state: 'connecting', detail: 'waiting for the broker' };
  lastRxS: number | null = null;
  started = false;
  private early: { text: string; rxS: number }[] = [];

  constructor(readonly id: string) {
    super();
    this.label = `remote:${id}`;
  }

  start(): void {
    this.started = true;
    this.emit('status', this.status);
    const early = this.early;
    this.early = [];
    for (const line of early) this.emit('line', { ...line, tooLong: false });
  }

  async stop(): Promise<void> {
    this.started = false;
  }

  setStatus(status: SourceStatus): void {
    if (status.state === this.status.state && status.detail === this.status.detail) return;
    // Lost once: a second reason while lost keeps the first gap's start.
    if (status.state === 'lost' && this.status.state === 'lost') return;
    this.status = status;
    if (this.started) this.emit('status', status);
  }

  lose(detail: string): void {
    if (this.status.state !== 'open') return;
    this.setStatus({ state: 'lost', detail, sinceRxS: this.lastRxS ?? Date.now() / 1000 });
  }

  line(text: string, rxS: number): void {
    this.lastRxS = rxS;
    if (this.started) this.emit('line', { text, rxS, tooLong: false });
    else if (this.early.length < MAX_EARLY_LINES) this.early.push({ text, rxS });
  }
}

export function startSubscriber(url: string, stations: StationManager): Subscriber {
  const parsed = parseBrokerUrl(url);
  if (!parsed) throw new Error(`"${url}" is not a broker address: write mqtt://HOST[:PORT]/PREFIX`);
  const { brokerUrl, prefix } = parsed;
  const sources = new Map<string, RemoteSource>();
  const benchOnline = new Map<string, boolean>();
  /** Per station: the next batch expected, batches that came early, and the wait for a missing one. */
  const order = new Map<
    string,
    { session: number; next: number; held: Map<number, PublishedSample[]>; timer: NodeJS.Timeout | null }
  >();
  const lost = new Map<string, number>();
  const adding = new Map<string, Promise<unknown>>();
  const note = (message: string, level: 'warn' | 'critical' = 'warn') =>
    stations.emit('problem', { stationId: null, message, level });
  let brokerUp = false;
  let saidDown = false;

  // A persistent session (clean: false) under a fixed id: a broker that keeps sessions holds
  // the QoS 1 messages for us while we reconnect.
  const client: MqttClient = connect(brokerUrl, {
    clientId: `taperline-serve-${hostname()}-${process.pid}`.slice(0, 64),
    clean: false,
    reconnectPeriod: 1000,
    connectTimeout: 5000,
  });

  const sourceOf = (id: string): RemoteSource => {
    let source = sources.get(id);
    if (!source) sources.set(id, (source = new RemoteSource(id)));
    return source;
  };

  const ensureStation = (bench: string, station: string, label: string, profile: unknown): void => {
    const id = `${bench}/${station}`;
    if (stations.get(id) || adding.has(id)) return;
    const pending = stations
      .addStation({
        id,
        label: `${bench}/${label}`,
        source: { kind: 'remote', url, bench, station },
        profile: centralProfile(profile),
      })
      .catch((err: Error) => note(`remote station ${id} could not be shown: ${err.message}`))
      .finally(() => adding.delete(id));
    adding.set(id, pending);
  };

  const reflect = (bench: string) => {
    const up = brokerUp && benchOnline.get(bench) !== false;
    for (const [id, source] of sources) {
      if (!id.startsWith(`${bench}/`)) continue;
      if (up) {
        if (source.status.state !== 'open')
          source.setStatus({ state: 'open', detail: `bench ${bench} through ${brokerUrl}` });
      } else {
        source.lose(
          brokerUp ? `bench ${bench} went offline` : `broker ${brokerUrl} is not reachable; retrying`,
        );
      }
    }
  };

  client.on('connect', () => {
    brokerUp = true;
    if (saidDown) note(`broker ${brokerUrl} is back`);
    saidDown = false;
    for (const bench of new Set([...sources.keys()].map((id) => id.split('/')[0]!))) reflect(bench);
  });
  const down = (why: string) => {
    if (!brokerUp && saidDown) return;
    brokerUp = false;
    if (!saidDown)
      note(`broker ${brokerUrl} is not reachable (${why}); remote stations are marked lost until it is back`);
    saidDown = true;
    for (const source of sources.values()) source.lose(`broker ${brokerUrl} is not reachable; retrying`);
  };
  client.on('offline', () => down('offline'));
  client.on('close', () => down('connection closed'));
  client.on('error', (err) => down(err.message));

  /** Hands on batches in sequence order; a missing one is waited for, then counted as lost. */
  function deliver(
    id: string,
    source: RemoteSource,
    o: { next: number; held: Map<number, PublishedSample[]>; timer: NodeJS.Timeout | null },
  ): void {
    for (let batch = o.held.get(o.next); batch; batch = o.held.get(o.next)) {
      o.held.delete(o.next);
      o.next++;
      for (const s of batch) source.line(sampleLine(s), s.rxS);
    }
    if (o.held.size === 0) {
      if (o.timer) clearTimeout(o.timer);
      o.timer = null;
      return;
    }
    o.timer ??= setTimeout(() => {
      o.timer = null;
      const first = Math.min(...o.held.keys());
      const missing = first - o.next;
      lost.set(id, (lost.get(id) ?? 0) + missing);
      note(`${id}: ${missing} sample batch(es) from the bench never arrived; the run has a hole there`);
      o.next = first;
      deliver(id, source, o);
    }, REORDER_WAIT_MS);
  }

  client.on('message', (topic, payload) => {
    const where = parseTopic(prefix, topic);
    if (!where) return;
    let json: unknown;
    try {
      json = JSON.parse(payload.toString('utf8'));
    } catch {
      return;
    }
    if (where.leaf === 'online') {
      const p = onlinePayload.safeParse(json);
      if (!p.success) return;
      benchOnline.set(where.bench, p.data.online);
      reflect(where.bench);
      return;
    }
    const id = `${where.bench}/${where.station}`;
    if (where.leaf === 'status') {
      const p = statusPayload.safeParse(json);
      if (!p.success) return;
      sourceOf(id);
      if (p.data.source.state !== 'closed')
        ensureStation(where.bench, where.station, p.data.label, p.data.profile);
      reflect(where.bench);
      return;
    }
    if (where.leaf === 'samples') {
      const p = samplesPayload.safeParse(json);
      if (!p.success) return;
      const { session, seq, samples } = p.data;
      const source = sourceOf(id);
      if (!stations.get(id) && !adding.has(id))
        ensureStation(where.bench, where.station, where.station, null);
      if (source.status.state !== 'open' && brokerUp)
        source.setStatus({ state: 'open', detail: `bench ${where.bench} through ${brokerUrl}` });
      let o = order.get(id);
      if (!o || o.session !== session) {
        // A bench (re)started: its batches count from 1 again.
        if (o?.timer) clearTimeout(o.timer);
        o = { session, next: seq, held: new Map(), timer: null };
        order.set(id, o);
      }
      if (seq < o.next || o.held.has(seq)) return; // a repeat (QoS 1 may send twice)
      o.held.set(seq, samples);
      deliver(id, source, o);
    }
  });

  // Status first (retained), so a station exists with its profile before its samples come.
  // Not awaited: with the broker away they wait in MQTT.js's queue, and serve starts anyway.
  for (const topic of [`${prefix}/+/online`, `${prefix}/+/+/status`, `${prefix}/+/+/samples`])
    client.subscribe(topic, { qos: 1 }, () => undefined);

  return {
    sourceFor: (config) => sourceOf(`${config.bench}/${config.station}`),
    lostBatches: () => Object.fromEntries(lost),
    async stop() {
      for (const o of order.values()) if (o.timer) clearTimeout(o.timer);
      await client.endAsync(true);
    },
  };
}
