export { createSource, sourceLabel, SOURCE_KINDS } from './registry';
export type { SourceContext, SourceKindModule, RemoteStations } from './kind';
export type { LineSource, SourceLine, SourceStatus } from './types';
