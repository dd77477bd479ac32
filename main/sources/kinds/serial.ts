/** Serial ports (USB-serial bridges, ptys): the port itself lives in main/serial/. */
import { describeSource, SOURCE_KIND_TITLES, serialSourceSchema } from '@shared/sources/schemas';
import { createSerialSource } from '../../serial/serial-source';
import type { SourceKindModule } from '../kind';

export const serialKind: SourceKindModule<'serial'> = {
  kind: 'serial',
  schema: serialSourceSchema,
  title: SOURCE_KIND_TITLES.serial,
  label: describeSource,
  create: (config, { now }) => createSerialSource(config, { now }),
};
