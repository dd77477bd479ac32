/** The recorder's public surface. */
export { openRecorder, type RecorderOptions } from './recorder';
export { openDatabase, openRunReader } from './database';
export { defaultDbPath, defaultDataDir } from './paths';
export { RecorderOpenError, describeDbError } from './errors';
export { migrate, MIGRATIONS, SCHEMA_VERSION } from './schema';
export type * from './types';
