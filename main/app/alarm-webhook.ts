/**
 * `serve --webhook URL`: every alarm any station raises is POSTed to URL as JSON, for a burn-in
 * nobody is watching (a chat bridge, a pager gateway, a home-automation hook). Delivery is
 * bounded: a few retries with growing waits, then one line on the log and the alarm is dropped.
 * It never holds up recording: posts run on their own, at most MAX_IN_FLIGHT at a time.
 */
import type { AlarmEvent } from '@shared/engine/types';
import type { StationManager } from '../station/types';

/** What is POSTed: the alarm as the engine raised it, with where and when (format in docs/cli.md). */
export interface AlarmWebhookBody {
  type: 'alarm';
  station: string;
  stationLabel: string;
  run: number | null;
  t: number;
  code: AlarmEvent['code'];
  level: AlarmEvent['level'];
  message: string;
  atIso: string;
}

export interface AlarmWebhookOptions {
  url: string;
  stations: Pick<StationManager, 'on' | 'off' | 'get'>;
  /** One line per delivery that finally failed (and per retry). */
  log: (line: string) => void;
  /** Waits before each retry; the default gives up 21 s after the first try. */
  retryDelaysMs?: readonly number[];
  /** Per-attempt limit before the request is abandoned. */
  timeoutMs?: number;
  now?: () => Date;
}

export interface AlarmWebhook {
  /** Resolves when every delivery started so far has succeeded or given up. */
  idle(): Promise<void>;
  /** Stop listening; deliveries under way finish or give up on their own. */
  stop(): void;
  readonly stats: { sent: number; failed: number; dropped: number };
}

const DEFAULT_RETRY_DELAYS_MS = [1000, 4000, 16000];
const DEFAULT_TIMEOUT_MS = 5000;
/** A storm of alarms (a rack of 16 stations all losing their source) must not open a socket each. */
const MAX_IN_FLIGHT = 32;

/** Check the URL before serving starts, so a typo is a usage error and not a silent loss. */
export function parseWebhookUrl(raw: string): URL {
  let url: URL;
  try {
    url = new URL(raw);
  } catch {
    throw new Error(`--webhook needs an http:// or https:// address, got "${raw}"`);
  }
  if (url.protocol !== 'http:' && url.protocol !== 'https:')
    throw new Error(`--webhook needs an http:// or https:// address, got "${raw}"`);
  return url;
}

export function startAlarmWebhook(options: AlarmWebhookOptions): AlarmWebhook {
  const url = parseWebhookUrl(options.url).toString();
  const delays = options.retryDelaysMs ?? DEFAULT_RETRY_DELAYS_MS;
  const timeoutMs = options.timeoutMs ?? DEFAULT_TIMEOUT_MS;
  const now = options.now ?? (() => new Date());
  const stats = { sent: 0, failed: 0, dropped: 0 };
  const inFlight = new Set<Promise<void>>();

  const sleep = (ms: number) => new Promise<void>((resolve) => setTimeout(resolve, ms));

  async function attempt(body: string): Promise<string | null> {
    try {
      const res = await fetch(url, {
        method: 'POST',
        headers: { 'content-type': 'application/json' },
        body,
        signal: AbortSignal.timeout(timeoutMs),
      });
      // Drain the body so the socket is released.
      await res.arrayBuffer().catch(() => undefined);
      return res.ok ? null : `HTTP ${res.status}`;
    } catch (err) {
      const e = err as Error & { cause?: { code?: string } };
      if (e.name === 'TimeoutError') return `no answer within ${timeoutMs} ms`;
      return e.cause?.code ?? e.message;
    }
  }

  async function deliver(payload: AlarmWebhookBody): Promise<void> {
    const body = JSON.stringify(payload);
    const what = `${payload.code} on ${payload.station}`;
    let problem = await attempt(body);
    for (let i = 0; problem !== null && i < delays.length; i++) {
      options.log(`webhook: ${what} not delivered (${problem}); retrying in ${delays[i] / 1000} s`);
      await sleep(delays[i]);
      problem = await attempt(body);
    }
    if (problem === null) stats.sent++;
    else {
      stats.failed++;
      options.log(
        `webhook: gave up on ${what} after ${delays.length + 1} tries (${problem}); the alarm is still recorded and shown in the dashboard`,
      );
    }
  }

  const onEvent = ({ stationId, event }: { stationId: string; event: AlarmEvent | { type: string } }) => {
    if (event.type !== 'alarm') return;
    const alarm = event as AlarmEvent;
    if (inFlight.size >= MAX_IN_FLIGHT) {
      stats.dropped++;
      options.log(
        `webhook: ${alarm.code} on ${stationId} dropped: ${MAX_IN_FLIGHT} deliveries already waiting`,
      );
      return;
    }
    const snapshot = options.stations.get(stationId);
    const payload: AlarmWebhookBody = {
      type: 'alarm',
      station: stationId,
      stationLabel: snapshot?.label ?? stationId,
      run: snapshot?.runId ?? null,
      t: alarm.t,
      code: alarm.code,
      level: alarm.level,
      message: alarm.message,
      atIso: now().toISOString(),
    };
    const p: Promise<void> = deliver(payload).finally(() => inFlight.delete(p));
    inFlight.add(p);
  };
  options.stations.on('event', onEvent);

  return {
    stats,
    async idle() {
      while (inFlight.size > 0) await Promise.all([...inFlight]);
    },
    stop() {
      options.stations.off('event', onEvent);
    },
  };
}
