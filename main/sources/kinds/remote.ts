/** A station of another bench, received through an MQTT broker. */
import { describeSource, SOURCE_KIND_TITLES, remoteSourceSchema } from '@shared/sources/schemas';
import type { SourceKindModule } from '../kind';

export const remoteKind: SourceKindModule<'remote'> = {
  kind: 'remote',
  schema: remoteSourceSchema,
  title: SOURCE_KIND_TITLES.remote,
  label: describeSource,
  create: (config, { remote }) => {
    if (!remote) throw new Error('remote stations need a broker subscription (serve --subscribe mqtt://…)');
    return remote.sourceFor(config);
  },
};
