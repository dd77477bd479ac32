/** What every kind of source exports: its name, schema, words, label and factory. */
import type { z } from 'zod';
import type { SourceConfig, SourceConfigOf, SourceKind } from '@shared/sources/schemas';
import type { RunReader } from '../recorder/types';
import type { LineSource } from './types';

/** What a factory may need besides its config; each kind takes only what it uses. */
export interface SourceContext {
  /** Receive clock, seconds since the epoch. */
  now: () => number;
  /** The recording database, for replays of recorded runs; null when recording is off. */
  reader: RunReader | null;
  /** Stations of other benches received through a broker (`serve --subscribe`). */
  remote: RemoteStations | null;
}

/** Hands out the line source of one remote station (see main/sources/mqtt/). */
export interface RemoteStations {
  sourceFor(config: SourceConfigOf<'remote'>): LineSource;
}

export interface SourceKindModule<K extends SourceKind> {
  kind: K;
  schema: z.ZodType<SourceConfigOf<K>>;
  /** Words the kind is offered with (Connect view, help texts). */
  title: string;
  /** How a station on this source labels itself when no label is given. */
  label(config: SourceConfigOf<K>): string;
  create(config: SourceConfigOf<K>, context: SourceContext): LineSource;
}

export type { SourceConfig };
