/**
 * Rack files (shared/sources/rack.ts): read one given on the command line into station
 * configs, and keep the saved rack next to the database so the stations come back after a
 * restart with the same ids and profiles.
 */
import { existsSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import { dirname, isAbsolute, resolve } from 'node:path';
import type { z } from 'zod';
import { rackFileSchema, type RackFile, type RackStation } from '@shared/sources/rack';
import { sourceFromPort, type StationConfig } from '@shared/sources/schemas';
import { getScenario } from '../simulator/scenarios';
import type { StationManager } from '../station/types';
import { InputFileError } from './input-file-error';
import { readValidatedProfileJson, resolveProfileJson } from './profile-file';

export const DEFAULT_BAUD = 115200;

function issues(error: z.ZodError): string {
  return error.issues
    .slice(0, 3)
    .map((i) => `${i.path.length ? i.path.join('.') : '(root)'}: ${i.message}`)
    .join('; ');
}

/** Reads and checks a rack file; every failure is one line naming the file and the key. */
export function readRackFile(path: string): RackFile {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    throw new InputFileError(
      code === 'ENOENT'
        ? `no such rack file: ${path}`
        : `cannot read rack file ${path}: ${(err as Error).message}`,
    );
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (err) {
    throw new InputFileError(`rack file ${path} is not valid JSON: ${(err as Error).message}`);
  }
  const parsed = rackFileSchema.safeParse(json);
  if (!parsed.success)
    throw new InputFileError(`rack file ${path} refused (nothing was started): ${issues(parsed.error)}`);
  return parsed.data;
}

/**
 * Station configs for rack entries. Profiles named by file are read relative to `baseDir`;
 * ids not given are made from the port or scenario, and a repeated id is refused.
 */
export function rackToStations(entries: RackStation[], baseDir: string, origin: string): StationConfig[] {
  const configs: StationConfig[] = [];
  const ids = new Set<string>();
  entries.forEach((entry, index) => {
    const where = `${origin}: station ${index + 1}${entry.id ? ` (${entry.id})` : ''}`;
    let config: StationConfig;
    if (entry.simulate !== undefined) {
      let scenario;
      try {
        scenario = getScenario(entry.simulate);
      } catch (err) {
        throw new InputFileError(`${where}: ${(err as Error).message}`);
      }
      config = {
        id: entry.id ?? `sim-${scenario.name}`,
        label: entry.label ?? `Simulated: ${scenario.name}`,
        source: { kind: 'simulator', scenario: scenario.name, speedup: entry.speedup },
        profile: profileOf(entry.profile, baseDir, where) ?? scenario.profile,
      };
    } else {
      let source;
      try {
        source = sourceFromPort(entry.port!, entry.baud ?? DEFAULT_BAUD);
      } catch (err) {
        throw new InputFileError(`${where}: ${(err as Error).message}`);
      }
      config = {
        id: entry.id ?? `station-${index + 1}`,
        label: entry.label ?? entry.port,
        source,
        profile: profileOf(entry.profile, baseDir, where),
      };
    }
    let id = config.id;
    for (let n = 2; ids.has(id) && entry.id === undefined; n++) id = `${config.id}-${n}`;
    if (ids.has(id))
      throw new InputFileError(`${where}: the id "${id}" is used twice; give each station its own id`);
    ids.add(id);
    configs.push({ ...config, id });
  });
  return configs;
}

function profileOf(profile: RackStation['profile'], baseDir: string, where: string): unknown {
  if (profile === undefined || profile === null) return null;
  if (typeof profile === 'string')
    return readValidatedProfileJson(isAbsolute(profile) ? profile : resolve(baseDir, profile));
  resolveProfileJson(profile, `${where}: profile`);
  return profile;
}

/** A station as a rack file entry; null for stations that come back by themselves (replays, remote). */
export function stationToRack(config: StationConfig): RackStation | null {
  const profile = (config.profile ?? null) as RackStation['profile'];
  const common = { id: config.id, ...(config.label !== undefined ? { label: config.label } : {}), profile };
  switch (config.source.kind) {
    case 'serial':
      return { ...common, port: config.source.path, baud: config.source.baudRate };
    case 'tcp':
      return { ...common, port: `tcp://${config.source.host}:${config.source.port}` };
    case 'simulator':
      return {
        ...common,
        simulate: config.source.scenario,
        ...(config.source.speedup !== undefined ? { speedup: config.source.speedup } : {}),
      };
    default:
      return null;
  }
}

/** Where serve keeps the rack of a database: `runs.sqlite` → `runs.rack.json` beside it. */
export function savedRackPath(dbPath: string): string {
  return `${dbPath.replace(/\.(sqlite3?|db)$/i, '')}.rack.json`;
}

/** The saved rack's stations, or none when there is no saved rack yet. */
export function readSavedRack(path: string): StationConfig[] {
  if (!existsSync(path)) return [];
  return rackToStations(readRackFile(path).stations, dirname(path), `saved rack ${path}`);
}

/**
 * Keeps the saved rack in step with the stations: written (atomically: a temporary file
 * renamed over it) when a station is added or removed, when a profile changes (checked every
 * few seconds) and at stop.
 */
export function keepSavedRack(
  manager: StationManager,
  path: string,
  onProblem: (message: string) => void,
  checkEveryMs = 2000,
): { save(): void; stop(): void } {
  let lastText: string | null = existsSync(path) ? readFileSync(path, 'utf8') : null;
  let failing = false;
  const save = () => {
    const stations = manager
      .list()
      .map((s) => manager.configOf(s.id))
      .map((c) => (c ? stationToRack(c) : null))
      .filter((s): s is RackStation => s !== null);
    const text = `${JSON.stringify({ stations } satisfies RackFile, null, 2)}\n`;
    if (text === lastText) return;
    try {
      writeFileSync(`${path}.tmp`, text);
      renameSync(`${path}.tmp`, path);
      lastText = text;
      failing = false;
    } catch (err) {
      if (!failing) onProblem(`could not save the rack to ${path}: ${(err as Error).message}; retrying`);
      failing = true;
    }
  };
  const onChange = () => save();
  manager.on('station-added', onChange);
  manager.on('station-removed', onChange);
  const timer = setInterval(save, checkEveryMs);
  timer.unref();
  return {
    save,
    stop() {
      clearInterval(timer);
      manager.off('station-added', onChange);
      manager.off('station-removed', onChange);
    },
  };
}
