/**
 * Every kind of line source, in one table. The station factory, the request schema (through
 * shared/sources), the Connect view's choices and the CLI's station ports are built from it:
 * a new kind is one module in kinds/ and one line here.
 */
import type { SourceConfig, SourceConfigOf, SourceKind } from '@shared/sources/schemas';
import type { SourceContext, SourceKindModule } from './kind';
import { fileKind } from './kinds/file';
import { remoteKind } from './kinds/remote';
import { replayKind } from './kinds/replay';
import { serialKind } from './kinds/serial';
import { simulatorKind } from './kinds/simulator';
import { tcpKind } from './kinds/tcp';
import type { LineSource } from './types';

export const SOURCE_KINDS: { [K in SourceKind]: SourceKindModule<K> } = {
  serial: serialKind,
  simulator: simulatorKind,
  tcp: tcpKind,
  replay: replayKind,
  remote: remoteKind,
  file: fileKind,
};

function createOf<K extends SourceKind>(
  kind: K,
  config: SourceConfigOf<K>,
  context: SourceContext,
): LineSource {
  return SOURCE_KINDS[kind].create(config, context);
}

function labelOf<K extends SourceKind>(kind: K, config: SourceConfigOf<K>): string {
  return SOURCE_KINDS[kind].label(config);
}

/** The line source for a station's source config. Throws a plain Error for one it cannot use. */
export function createSource(config: SourceConfig, context: SourceContext): LineSource {
  return createOf(config.kind, config, context);
}

export function sourceLabel(config: SourceConfig): string {
  return labelOf(config.kind, config);
}
