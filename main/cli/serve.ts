/**
 * `taperline serve`: the dashboard without Electron. Starts the recorder, the station
 * manager, the stations asked for and the local web server, prints one line with the
 * address, and on Ctrl-C (SIGINT) or SIGTERM closes every run as stopped.
 */
import { spawn } from 'node:child_process';
import { Option, type Command } from 'commander';
import { BackendStartError, startBackend, type BackendOptions } from '../app/backend';
import { reportChildFatal, runChildBackend } from '../app/child-backend';
import { parseWebhookUrl, startAlarmWebhook } from '../app/alarm-webhook';
import { realLibraries } from '../app/libraries';
import { parseBrokerUrl } from '@shared/sources/mqtt-topics';
import { InputFileError } from '../app/input-file-error';
import { stationsFromOptions } from '../app/station-options';
import { RecorderOpenError } from '../recorder/errors';
import { startServer } from '../server';
import { UsageError } from './errors';
import { baudRate, portNumber, positiveNumber } from './options';

/** Default port of `taperline serve` (unassigned by IANA; any free port works with --port). */
export const DEFAULT_SERVE_PORT = 4870;

interface ServeOptions {
  host: string;
  port: string;
  simulate: string[];
  speedup?: string;
  db?: string;
  record: boolean;
  stationPort: string[];
  baud: string;
  profile?: string;
  rack?: string;
  fresh?: boolean;
  subscribe?: string;
  open?: boolean;
  webhook?: string;
  electronChild?: boolean;
}

export function registerServe(program: Command): void {
  program
    .command('serve')
    .description('Serve the dashboard to a browser on this machine (the desktop app without Electron).')
    .option(
      '--host <address>',
      'address to listen on; anything but loopback requires the printed token',
      '127.0.0.1',
    )
    .option('--port <n>', 'TCP port (0 = any free port)', String(DEFAULT_SERVE_PORT))
    .option(
      '--simulate <scenario>',
      'start a simulated station running this scenario (repeat for several)',
      collect,
      [] as string[],
    )
    .option('--speedup <n>', 'simulated seconds per real second, with --simulate')
    .option('--db <file>', 'recording database (default: taperline.sqlite in your data folder)')
    .option('--no-record', 'do not record runs to a database')
    .option(
      '--station-port <path>',
      'start a station on this serial port or tcp://HOST:PORT (repeat for several)',
      collect,
      [] as string[],
    )
    .option('--baud <n>', 'baud rate of the --station-port serial ports', '115200')
    .option('--profile <file>', 'profile JSON of the --station-port stations')
    .option(
      '--rack <file>',
      'start the stations of this rack file (JSON: stations with port, profile, label)',
    )
    .option('--fresh', 'do not bring back the stations saved with the database (the saved rack)')
    .option('--subscribe <url>', 'show every station published to mqtt://HOST[:PORT]/PREFIX')
    .option('--open', 'open the address in the default browser')
    .option(
      '--webhook <url>',
      'POST every alarm as JSON to this http(s) address (a few retries, then logged)',
    )
    .addOption(
      new Option(
        '--electron-child',
        'run as the backend of the desktop app (over its IPC channel)',
      ).hideHelp(),
    )
    .action(async (options: ServeOptions) => {
      await serve(options);
    });
}

function collect(value: string, all: string[]): string[] {
  return [...all, value];
}

export function backendOptionsFrom(options: ServeOptions): BackendOptions {
  const simulate = options.simulate ?? [];
  const ports = options.stationPort ?? [];
  if (options.speedup !== undefined && simulate.length === 0)
    throw new UsageError('--speedup goes with --simulate SCENARIO');
  const known = realLibraries.listScenarios().map((s) => (s as { name: string }).name);
  for (const name of simulate)
    if (!known.includes(name))
      throw new UsageError(`no scenario "${name}"; known scenarios: ${known.join(', ')}`);
  if (ports.length > 0 && !options.profile)
    throw new UsageError(
      '--station-port needs --profile P.json: the profile says what is charged and how it reports',
    );
  if (ports.length === 0 && options.profile)
    throw new UsageError('--profile goes with --station-port (a simulated station brings its own profile)');
  if (options.subscribe && !parseBrokerUrl(options.subscribe))
    throw new UsageError(`--subscribe must be mqtt://HOST[:PORT]/PREFIX (got "${options.subscribe}")`);
  try {
    const stations = stationsFromOptions({
      ports,
      baudRate: baudRate('--baud', options.baud),
      profilePath: options.profile,
      simulate,
      speedup: options.speedup === undefined ? undefined : positiveNumber('--speedup', options.speedup),
      rackPath: options.rack,
    });
    return {
      dbPath: options.record ? (options.db ?? undefined) : null,
      stations,
      savedRack: options.fresh !== true,
      subscribe: options.subscribe,
    };
  } catch (err) {
    if (err instanceof InputFileError) throw new UsageError(err.message);
    throw err;
  }
}

async function serve(options: ServeOptions): Promise<void> {
  if (options.electronChild) {
    let childOptions: BackendOptions;
    try {
      childOptions = backendOptionsFrom(options);
    } catch (err) {
      await reportChildFatal((err as Error).message);
      throw err;
    }
    await runChildBackend(childOptions);
    return;
  }
  const backendOptions = backendOptionsFrom(options);
  const port = portNumber('--port', options.port);
  if (options.webhook !== undefined) {
    try {
      parseWebhookUrl(options.webhook);
    } catch (err) {
      throw new UsageError((err as Error).message);
    }
  }
  let backend;
  try {
    backend = await startBackend(backendOptions);
  } catch (err) {
    if (err instanceof BackendStartError || err instanceof RecorderOpenError)
      throw new UsageError(err.message);
    throw err;
  }
  let server;
  try {
    server = await startServer({
      host: options.host,
      port,
      service: backend.service,
      recorder: backend.recorder,
      reportHtml: backend.recorder
        ? (runId) => realLibraries.runReportHtml(backend.recorder!, runId)
        : undefined,
      reportPdf: backend.recorder
        ? (runId) => realLibraries.runReportPdf(backend.recorder!, runId)
        : undefined,
      batchFile: backend.recorder
        ? async (batchId, what) => realLibraries.batchReportFile(backend.recorder!, batchId, what)
        : undefined,
    });
  } catch (err) {
    await backend.stop();
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'EADDRINUSE')
      throw new UsageError(`port ${port} is in use: pick another with --port N (0 = any free port)`);
    if (code === 'EADDRNOTAVAIL') throw new UsageError(`${options.host} is not an address of this machine`);
    throw new UsageError(`cannot listen on ${options.host}:${port}: ${(err as Error).message}`);
  }
  const stations = backend.stations.list().length;
  const recording = backend.recorder ? `recording to ${backend.recorder.dbPath}` : 'not recording';
  process.stdout.write(
    `Taperline is serving at ${server.url} (${stations} station${stations === 1 ? '' : 's'}, ${recording}; Ctrl-C stops)\n`,
  );
  if (options.open) openInBrowser(server.url);
  const webhook = options.webhook
    ? startAlarmWebhook({
        url: options.webhook,
        stations: backend.stations,
        log: (line) => process.stderr.write(`taperline: ${line}\n`),
      })
    : null;
  if (webhook) process.stdout.write(`Alarms are posted to ${options.webhook}\n`);

  await new Promise<void>((resolve) => {
    let stopping = false;
    const stop = () => {
      if (stopping) return;
      stopping = true;
      void (async () => {
        webhook?.stop();
        await server.close();
        await backend.stop();
        process.stdout.write('Taperline stopped; every run was closed as stopped.\n');
        resolve();
      })();
    };
    process.once('SIGINT', stop);
    process.once('SIGTERM', stop);
  });
}

function openInBrowser(url: string): void {
  const command =
    process.platform === 'darwin' ? 'open' : process.platform === 'win32' ? 'explorer' : 'xdg-open';
  const child = spawn(command, [url], { stdio: 'ignore', detached: true });
  child.on('error', () =>
    process.stderr.write(`taperline: could not open a browser (${command}); open ${url} yourself\n`),
  );
  child.unref();
}
