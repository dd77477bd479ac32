/**
 * Two station managers seen as one: the recording manager for live stations and a second,
 * not recording, for replays of recorded runs (a replay must not record a copy of its run).
 * The service and its views see a single list of stations.
 */
import { EventEmitter } from 'node:events';
import type { StationConfig, StationManager, StationManagerEvents, StationSnapshot } from '../station/types';

const EVENTS: (keyof StationManagerEvents)[] = [
  'station-added',
  'station-removed',
  'sample',
  'event',
  'line',
  'source',
  'problem',
];

export function combineStationManagers(
  live: StationManager,
  replays: StationManager,
  isReplay: (config: StationConfig) => boolean,
): StationManager {
  const emitter = new EventEmitter<StationManagerEvents>();
  emitter.setMaxListeners(0);
  const forward = emitter.emit.bind(emitter) as (name: string, ...args: unknown[]) => boolean;
  for (const manager of [live, replays]) {
    for (const name of EVENTS) manager.on(name, ((...args: unknown[]) => forward(name, ...args)) as never);
  }
  const owner = (stationId: string): StationManager => {
    if (live.get(stationId)) return live;
    if (replays.get(stationId)) return replays;
    throw new Error(`no station "${stationId}"`);
  };

  return Object.assign(emitter, {
    async addStation(config: StationConfig): Promise<StationSnapshot> {
      if (live.get(config.id) || replays.get(config.id))
        throw new Error(`a station "${config.id}" already exists`);
      return (isReplay(config) ? replays : live).addStation(config);
    },
    removeStation: (stationId: string) => owner(stationId).removeStation(stationId),
    list: () => [...live.list(), ...replays.list()],
    get: (stationId: string) => live.get(stationId) ?? replays.get(stationId),
    send: (stationId: string, text: string, ending: '\n' | '\r\n' | '\r' | '') =>
      owner(stationId).send(stationId, text, ending),
    setProfile: (stationId: string, profile: unknown) => owner(stationId).setProfile(stationId, profile),
    profileJsonOf: (stationId: string) => owner(stationId).profileJsonOf?.(stationId) ?? null,
    async close() {
      await Promise.all([live.close(), replays.close()]);
    },
  }) as StationManager;
}
