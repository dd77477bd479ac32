/**
 * The zod schema of every kind of line source a station can have, and the words each kind is
 * offered with. One table: the request schema (shared/ipc), the Connect view's choices, the
 * factories in main/sources/ and the CLI options are all built from it, and every type is
 * derived from these schemas.
 */
import { z } from 'zod';

export const serialSourceSchema = z
  .object({
    kind: z.literal('serial'),
    path: z.string().min(1).max(512),
    baudRate: z.number().int().min(50).max(4_000_000),
    dataBits: z.union([z.literal(5), z.literal(6), z.literal(7), z.literal(8)]).optional(),
    parity: z.enum(['none', 'even', 'odd']).optional(),
    stopBits: z.union([z.literal(1), z.literal(2)]).optional(),
    /** Find the device again after a replug, when it comes back under another path. */
    match: z
      .object({
        serialNumber: z.string().max(128).optional(),
        vendorId: z.string().max(16).optional(),
        productId: z.string().max(16).optional(),
      })
      .strict()
      .optional(),
  })
  .strict();

export const simulatorSourceSchema = z
  .object({
    kind: z.literal('simulator'),
    scenario: z.string().min(1).max(64),
    /** Simulated seconds per wall-clock second (time compression for demos). */
    speedup: z.number().positive().max(10_000).optional(),
    shape: z.enum(['kv', 'csv', 'json']).optional(),
    sampleIntervalS: z.number().positive().max(3600).optional(),
  })
  .strict();

/** A raw TCP stream of telemetry lines: a board on Wi-Fi or a serial port shared on the network. */
export const tcpSourceSchema = z
  .object({
    kind: z.literal('tcp'),
    host: z.string().min(1).max(253),
    port: z.number().int().min(1).max(65535),
  })
  .strict();

/** A recorded run read again from the recording database, at `speed` times its pace. */
export const replaySourceSchema = z
  .object({
    kind: z.literal('replay'),
    runId: z.number().int().positive(),
    speed: z.union([z.number().positive().max(100_000), z.literal('max')]),
  })
  .strict();

/** A station of another bench, received through an MQTT broker (`serve --subscribe`). */
export const remoteSourceSchema = z
  .object({
    kind: z.literal('remote'),
    /** Broker URL with its topic prefix, `mqtt://HOST[:PORT]/PREFIX`. */
    url: z.string().min(1).max(512),
    bench: z.string().min(1).max(64),
    station: z.string().min(1).max(64),
  })
  .strict();

/** A telemetry file, or `-` for standard input (the `replay` and `diagnose` commands). */
export const fileSourceSchema = z
  .object({
    kind: z.literal('file'),
    path: z.string().min(1).max(4096),
    /** Seconds between lines on the synthetic receive clock of a file without device time. */
    intervalS: z.number().positive().max(3600).optional(),
  })
  .strict();

export const sourceConfigSchema = z.discriminatedUnion('kind', [
  serialSourceSchema,
  simulatorSourceSchema,
  tcpSourceSchema,
  replaySourceSchema,
  remoteSourceSchema,
  fileSourceSchema,
]);

export type SourceConfig = z.infer<typeof sourceConfigSchema>;

/** The kinds a person can start a station on from the Connect view (the `stations.add` request). */
export const connectableSourceSchema = z.discriminatedUnion('kind', [
  serialSourceSchema,
  simulatorSourceSchema,
  tcpSourceSchema,
]);
export type ConnectableSourceConfig = z.infer<typeof connectableSourceSchema>;

/**
 * A station: one source, its profile (JSON as written, validated by the chemistry layer, which
 * names the bad key; null = assumed from the first pack voltage) and whether its runs are
 * recorded (a replay of a recorded run is not recorded again).
 */
export const stationSchema = z
  .object({
    /** Stable id, e.g. `bench-1`, or `<bench>/<station>` for a remote one. */
    id: z.string().min(1).max(130),
    label: z.string().max(120).optional(),
    source: sourceConfigSchema,
    profile: z.unknown(),
    /** Record the station's runs (default true). */
    record: z.boolean().optional(),
  })
  .strict();
export type StationConfig = z.infer<typeof stationSchema>;
export type SourceKind = SourceConfig['kind'];
export type SourceConfigOf<K extends SourceKind> = Extract<SourceConfig, { kind: K }>;
export type SerialSourceConfig = SourceConfigOf<'serial'>;
export type SimulatorSourceConfig = SourceConfigOf<'simulator'>;
export type TcpSourceConfig = SourceConfigOf<'tcp'>;
export type ReplaySourceConfig = SourceConfigOf<'replay'>;
export type RemoteSourceConfig = SourceConfigOf<'remote'>;
export type FileSourceConfig = SourceConfigOf<'file'>;

/** The words each kind is shown with (Connect view, station labels). */
export const SOURCE_KIND_TITLES: Record<SourceKind, string> = {
  simulator: 'Simulated charger',
  serial: 'Serial port',
  tcp: 'Network (TCP)',
  replay: 'Recorded run',
  remote: 'Remote bench (MQTT)',
  file: 'Telemetry file',
};

/** The Connect view's choices, in the order shown, read from the connectable schema. */
export const CONNECTABLE_KINDS: ConnectableSourceConfig['kind'][] = connectableSourceSchema.options.map(
  (option) => option.shape.kind.value,
);

/** `tcp://HOST:PORT` → a TCP source config; null when `text` is not a tcp:// address. */
export function parseTcpAddress(text: string): TcpSourceConfig | null {
  const match = /^tcp:\/\/(\[[0-9a-fA-F:.]+\]|[^:/\s]+):(\d{1,5})\/?$/.exec(text.trim());
  if (!match) return null;
  const port = Number(match[2]);
  if (port < 1 || port > 65535) return null;
  return { kind: 'tcp', host: match[1]!.replace(/^\[|\]$/g, ''), port };
}

/** A station port as typed on a command line or in a rack file: `tcp://HOST:PORT` or a serial path. */
export function sourceFromPort(port: string, baudRate: number): SerialSourceConfig | TcpSourceConfig {
  if (/^tcp:/i.test(port.trim())) {
    const tcp = parseTcpAddress(port);
    if (!tcp)
      throw new Error(`"${port}" is not a TCP address: write tcp://HOST:PORT, e.g. tcp://192.168.1.40:4000`);
    return tcp;
  }
  return { kind: 'serial', path: port, baudRate };
}

/** One line naming a source, as a station shows it when no label is given. */
export function describeSource(config: SourceConfig): string {
  switch (config.kind) {
    case 'serial':
      return config.path;
    case 'simulator':
      return `simulator:${config.scenario}`;
    case 'tcp':
      return `tcp://${config.host.includes(':') ? `[${config.host}]` : config.host}:${config.port}`;
    case 'replay':
      return `replay:run ${config.runId}`;
    case 'remote':
      return `remote:${config.bench}/${config.station}`;
    case 'file':
      return config.path === '-' ? 'standard input' : config.path;
  }
}
