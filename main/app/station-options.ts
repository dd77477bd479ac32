/**
 * Stations asked for on a command line (`serve`, `record`): station ports (serial paths or
 * `tcp://HOST:PORT`), simulator scenarios and a rack file, turned into station configs in
 * one place. Refusals are InputFileErrors naming the option or file.
 */
import { dirname } from 'node:path';
import type { StationConfig } from '@shared/sources/schemas';
import { getScenario } from '../simulator/scenarios';
import { InputFileError } from './input-file-error';
import { readValidatedProfileJson } from './profile-file';
import { rackToStations, readRackFile, DEFAULT_BAUD } from './rack';

export interface StationOptions {
  /** Serial paths or tcp:// addresses. */
  ports: string[];
  baudRate?: number;
  /** Profile file for every station port; absent = assumed from the first pack voltage. */
  profilePath?: string;
  simulate: string[];
  speedup?: number;
  rackPath?: string;
  /** The id of the n-th station port (default `bench-1`, `bench-2`, …). */
  portId?: (port: string, index: number) => string;
}

export function stationsFromOptions(options: StationOptions): StationConfig[] {
  const configs: StationConfig[] = [];
  if (options.rackPath) {
    const rack = readRackFile(options.rackPath);
    configs.push(
      ...rackToStations(rack.stations, dirname(options.rackPath), `rack file ${options.rackPath}`),
    );
  }
  const profile = options.profilePath ? readValidatedProfileJson(options.profilePath) : null;
  const portId = options.portId ?? ((_port: string, index: number) => `bench-${index + 1}`);
  const fromPorts = rackToStations(
    [...new Set(options.ports)].map((port, index) => ({
      id: portId(port, index),
      label: port,
      port,
      baud: options.baudRate ?? DEFAULT_BAUD,
      profile: null,
    })),
    '.',
    '--station-port',
  ).map((c) => ({ ...c, profile }));
  const fromScenarios = options.simulate.map((name, index) => {
    let scenario;
    try {
      scenario = getScenario(name);
    } catch (err) {
      throw new InputFileError(`--simulate: ${(err as Error).message}`);
    }
    const repeat = options.simulate.slice(0, index).filter((n) => n === name).length;
    return {
      id: `sim-${scenario.name}${repeat > 0 ? `-${repeat + 1}` : ''}`.slice(0, 64),
      label: `Simulated: ${scenario.name}${repeat > 0 ? ` (${repeat + 1})` : ''}`,
      source: { kind: 'simulator' as const, scenario: scenario.name, speedup: options.speedup },
      profile: scenario.profile,
    };
  });
  const all = [...configs, ...fromPorts, ...fromScenarios];
  const seen = new Set<string>();
  for (const c of all) {
    if (seen.has(c.id))
      throw new InputFileError(`two stations have the id "${c.id}": give each its own id in the rack file`);
    seen.add(c.id);
  }
  return all;
}
