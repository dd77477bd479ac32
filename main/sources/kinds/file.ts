/** A telemetry file, or standard input (`-`). */
import { describeSource, SOURCE_KIND_TITLES, fileSourceSchema } from '@shared/sources/schemas';
import { createFileSource } from '../file-source';
import type { SourceKindModule } from '../kind';

export const fileKind: SourceKindModule<'file'> = {
  kind: 'file',
  schema: fileSourceSchema,
  title: SOURCE_KIND_TITLES.file,
  label: describeSource,
  create: (config) => createFileSource(config),
};
