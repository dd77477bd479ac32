/** `tcp://HOST:PORT`: a raw TCP stream of telemetry lines. */
import { describeSource, SOURCE_KIND_TITLES, tcpSourceSchema } from '@shared/sources/schemas';
import { createTcpSource } from '../tcp-source';
import type { SourceKindModule } from '../kind';

export const tcpKind: SourceKindModule<'tcp'> = {
  kind: 'tcp',
  schema: tcpSourceSchema,
  title: SOURCE_KIND_TITLES.tcp,
  label: describeSource,
  create: (config, { now }) => createTcpSource(config, { now }),
};
