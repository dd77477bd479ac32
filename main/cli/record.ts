/**
 * `taperline record`: records every given serial port as a station into the recording
 * database, with one live status line per station, until Ctrl-C / SIGTERM closes the runs.
 */
import type { Command } from 'commander';
import type { EngineEvent } from '@shared/engine/types';
import { defaultDbPath } from '../recorder/paths';
import { openRecorder } from '../recorder/recorder';
import { RecorderOpenError } from '../recorder/errors';
import type { Recorder } from '../recorder/types';
import { StationConfigError } from '../station/errors';
import { createStationManager, MAX_STATIONS } from '../station/manager';
import type { StationManager, StationSnapshot } from '../station/types';
import { hostname } from 'node:os';
import { parseBrokerUrl, topicLevel } from '@shared/sources/mqtt-topics';
import type { StationConfig } from '@shared/sources/schemas';
import { InputFileError } from '../app/input-file-error';
import { stationsFromOptions } from '../app/station-options';
import { startPublisher, type Publisher } from '../mqtt/publisher';
import { UsageError } from './errors';
import { nonNegativeNumber, positiveInteger, positiveNumber } from './options';
import { readValidatedProfileJson } from './profile-file';

interface RecordOptions {
  port: string[];
  simulate: string[];
  speedup?: string;
  publish?: string;
  bench?: string;
  baud: string;
  profile?: string;
  db?: string;
  resumeWithin: string;
  statusEvery: string;
}

function fmt(value: number | undefined, digits: number, unit: string): string {
  return value === undefined || !Number.isFinite(value) ? `-- ${unit}` : `${value.toFixed(digits)} ${unit}`;
}

/** One station's status: port state, phase, V, A, °C, Ah, active alarms. */
export function statusLine(s: StationSnapshot): string {
  const last = s.state.last;
  const port = s.source.state === 'open' ? 'open' : s.source.state;
  const alarms = s.state.activeAlarms.map((a) =>
    a.level === 'critical' ? `${a.code.toUpperCase()}!` : a.code,
  );
  const recording = s.recording.ok ? `run ${s.runId ?? '-'}` : 'NOT RECORDING';
  return [
    s.label,
    port,
    s.state.phase,
    fmt(last?.vbatV, 3, 'V'),
    fmt(last?.ibatA, 3, 'A'),
    fmt(last?.tempC, 1, '°C'),
    fmt(s.state.metrics.ah, 3, 'Ah'),
    `${s.lines} line${s.lines === 1 ? '' : 's'}${s.rejected > 0 ? ` (${s.rejected} rejected)` : ''}`,
    recording,
    alarms.length > 0 ? `alarms: ${alarms.join(' ')}` : 'no alarms',
  ].join(' | ');
}

function eventText(label: string, e: EngineEvent): string | null {
  switch (e.type) {
    case 'phase':
      return `${label}: phase ${e.phase} at t=${e.t.toFixed(1)} s`;
    case 'alarm':
      return `${label}: ${e.level.toUpperCase()} ${e.code} at t=${e.t.toFixed(1)} s: ${e.message}`;
    case 'alarm-clear':
      return `${label}: ${e.code} cleared at t=${e.t.toFixed(1)} s`;
    case 'gap':
      return e.endT === null
        ? `${label}: telemetry gap from t=${e.t.toFixed(1)} s`
        : `${label}: gap t=${e.t.toFixed(1)}–${e.endT.toFixed(1)} s (${e.reason})`;
  }
}

/** The live display: status lines redrawn in place on a terminal, plain periodic lines otherwise. */
class LiveDisplay {
  private drawn = 0;
  private lastPlainMs = 0;
  constructor(
    private readonly out: NodeJS.WriteStream,
    private readonly plainEveryMs: number,
  ) {}

  private get tty(): boolean {
    return this.out.isTTY === true;
  }

  private clearBlock(): void {
    if (!this.tty || this.drawn === 0) return;
    this.out.moveCursor(0, -this.drawn);
    this.out.cursorTo(0);
    this.out.clearScreenDown();
    this.drawn = 0;
  }

  /** A message above the status block (events, problems). */
  message(text: string, stations: StationSnapshot[]): void {
    this.clearBlock();
    this.out.write(`${text}\n`);
    if (this.tty) this.draw(stations);
  }

  update(stations: StationSnapshot[], force = false): void {
    if (this.tty) {
      this.clearBlock();
      this.draw(stations);
    } else if (force || Date.now() - this.lastPlainMs >= this.plainEveryMs) {
      this.lastPlainMs = Date.now();
      const stamp = new Date().toISOString();
      for (const s of stations) this.out.write(`${stamp} ${statusLine(s)}\n`);
    }
  }

  private draw(stations: StationSnapshot[]): void {
    const width = this.out.columns || 120;
    for (const s of stations) this.out.write(`${statusLine(s).slice(0, width - 1)}\n`);
    this.drawn = stations.length;
  }
}

export function registerRecord(program: Command): void {
  program
    .command('record')
    .description(
      'Record serial ports as stations into the recording database, with a live status line per station.',
    )
    .option(
      '--port <path>',
      'serial port or tcp://HOST:PORT of a charger (repeat for several stations)',
      (v: string, all: string[]) => [...all, v],
      [] as string[],
    )
    .option(
      '--simulate <scenario>',
      'also record a simulated charger running this scenario (repeat for several)',
      (v: string, all: string[]) => [...all, v],
      [] as string[],
    )
    .option('--speedup <n>', 'simulated seconds per real second, with --simulate')
    .option('--publish <url>', 'also publish every station to mqtt://HOST[:PORT]/PREFIX')
    .option('--bench <name>', 'name of this bench under the --publish prefix (default: the host name)')
    .option('--baud <n>', 'baud rate of every port', '115200')
    .option(
      '--profile <file>',
      'profile JSON (what is charged and how it reports); without it a Li-ion pack is assumed',
    )
    .option('--db <file>', `recording database (default ${defaultDbPath()})`)
    .option(
      '--resume-within <seconds>',
      'continue a run a crash left open when its port records again within this time',
      '600',
    )
    .option('--status-every <seconds>', 'without a terminal: print the status lines this often', '10')
    .action(async (options: RecordOptions) => {
      await record(options);
    });
}

async function record(options: RecordOptions): Promise<void> {
  // Baud rates go to the OS as they are; a positive integer is all that can be checked here.
  const baudRate = positiveInteger('--baud', options.baud, '115200');
  const resumeWithinS = nonNegativeNumber('--resume-within', options.resumeWithin, 'seconds');
  const statusEveryS = nonNegativeNumber('--status-every', options.statusEvery, 'seconds');
  const ports = [...new Set(options.port)];
  const simulate = options.simulate ?? [];
  if (ports.length === 0 && simulate.length === 0)
    throw new UsageError('give at least one --port PATH (see `taperline ports`) or --simulate SCENARIO');
  // Checked before anything starts, so no run is opened only to be closed again.
  if (ports.length + simulate.length > MAX_STATIONS)
    throw new UsageError(
      `at most ${MAX_STATIONS} stations can record at once (got ${ports.length} --port paths${simulate.length > 0 ? ` and ${simulate.length} --simulate` : ''}); nothing was recorded: run a second \`taperline record\` with another --db FILE for the rest`,
    );
  if (options.publish && !parseBrokerUrl(options.publish))
    throw new UsageError(`--publish must be mqtt://HOST[:PORT]/PREFIX (got "${options.publish}")`);
  if (options.bench !== undefined && !/^[A-Za-z0-9._-]{1,64}$/.test(options.bench))
    throw new UsageError(`--bench must be 1–64 letters, digits, . _ - (got "${options.bench}")`);
  const profile = options.profile ? readValidatedProfileJson(options.profile) : null;
  let configs: StationConfig[];
  try {
    configs = stationsFromOptions({
      ports,
      baudRate,
      simulate,
      speedup: options.speedup === undefined ? undefined : positiveNumber('--speedup', options.speedup),
      portId: (port) => (port.startsWith('tcp:') ? port : `serial:${port}`),
    }).map((c) => (c.source.kind === 'simulator' ? c : { ...c, profile }));
  } catch (err) {
    if (err instanceof InputFileError) throw new UsageError(err.message);
    throw err;
  }
  const dbPath = options.db ?? defaultDbPath();
  const display = new LiveDisplay(process.stdout, statusEveryS * 1000);

  let recorder: Recorder | null = null;
  try {
    recorder = openRecorder(dbPath);
  } catch (err) {
    if (!(err instanceof RecorderOpenError)) throw err;
    process.stderr.write(`taperline: ${err.message}. The live display continues without recording.\n`);
  }
  const manager: StationManager = createStationManager({ recorder, resumeWithinS });
  const snapshots = () => manager.list();
  manager.on('event', ({ stationId, event }) => {
    const text = eventText(manager.get(stationId)?.label ?? stationId, event);
    if (text) display.message(text, snapshots());
  });
  manager.on('problem', ({ message, level }) =>
    display.message(`${level === 'critical' ? 'CRITICAL' : 'note'}: ${message}`, snapshots()),
  );
  manager.on('source', ({ stationId, status }) => {
    if (status.state === 'open')
      display.message(`${manager.get(stationId)?.label ?? stationId}: ${status.detail}`, snapshots());
  });

  if (profile === null)
    process.stdout.write(
      'No --profile given: each station assumes a Li-ion pack from its first pack voltage.\n',
    );
  process.stdout.write(
    `Recording ${configs.length} station(s) into ${recorder ? dbPath : '(nothing: no database)'}; Ctrl-C stops and closes the runs.\n`,
  );
  process.stdout.write(
    'Caution: charging lithium and lead-acid cells can start fires; set limits from the cell maker’s datasheet and local codes.\n',
  );
  let publisher: Publisher | null = null;
  if (options.publish) {
    const bench = options.bench ?? topicLevel(hostname());
    publisher = await startPublisher(options.publish, {
      bench,
      stations: manager,
      profileOf: (id) => manager.configOf(id)?.profile ?? null,
      onNote: (message) => display.message(`note: ${message}`, snapshots()),
    });
    // Before the stations start, so their first samples are published too.
    process.stdout.write(`Publishing as bench "${bench}" to ${options.publish}\n`);
  }

  for (const config of configs) {
    const path = config.label ?? config.id;
    try {
      await manager.addStation(config);
    } catch (err) {
      // Stations already started must not keep their runs open: close them all, then say why.
      await publisher?.stop();
      await manager.close();
      recorder?.close();
      if (!(err instanceof StationConfigError)) throw err;
      throw new UsageError(
        `cannot record ${path}: ${err.message}; the stations already started were stopped and their runs closed`,
      );
    }
  }

  const refresh = setInterval(() => display.update(snapshots()), 500);
  display.update(snapshots(), true);
  await new Promise<void>((resolve) => {
    const stop = () => resolve();
    process.once('SIGINT', stop);
    process.once('SIGTERM', stop);
  });
  clearInterval(refresh);
  const last = snapshots();
  await manager.close();
  if (publisher) {
    await publisher.stop();
    const p = publisher.stats();
    process.stdout.write(
      `Published ${p.acknowledged} of ${p.published} messages to the broker${p.dropped > 0 ? ` (${p.dropped} dropped: the broker was away too long)` : ''}.\n`,
    );
  }
  recorder?.close();
  display.update(last, true);
  for (const s of last) {
    process.stdout.write(
      `${s.label}: ${s.runId !== null && recorder ? `run ${s.runId} closed as stopped` : 'not recorded'}, ${s.lines} lines (${s.rejected} rejected), ${s.state.metrics.ah.toFixed(3)} Ah\n`,
    );
  }
  const health = recorder?.health();
  if (health && health.dropped > 0)
    process.stdout.write(
      `${health.dropped} rows could not be written and were dropped (see the problems above).\n`,
    );
}
