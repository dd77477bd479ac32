/** The recorder's public surface. */
export { openRecorder, openRunReader, openDatabase, type RecorderOptions } from './recorder';
export { defaultDbPath, defaultDataDir } from './paths';
export { RecorderOpenError, describeDbError } from './errors';
export { migrate, MIGRATIONS, SCHEMA_VERSION } from './schema';
export type * from './types';
