/** The station layer's public surface. */
export { createStationManager, MAX_STATIONS, type StationManagerOptions } from './manager';
export { StationConfigError } from './errors';
export type * from './types';
