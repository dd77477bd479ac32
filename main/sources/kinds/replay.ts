/** A recorded run read again from the recording database (`runs.replay`). */
import { describeSource, SOURCE_KIND_TITLES, replaySourceSchema } from '@shared/sources/schemas';
import { ReplaySource } from '../replay-source';
import type { SourceKindModule } from '../kind';

export const replayKind: SourceKindModule<'replay'> = {
  kind: 'replay',
  schema: replaySourceSchema,
  title: SOURCE_KIND_TITLES.replay,
  label: describeSource,
  create: (config, { reader, now }) => {
    if (!reader) throw new Error('replaying needs the recording database, and recording is off');
    return new ReplaySource(reader, config.runId, config.speed === 'max' ? null : config.speed, now);
  },
};
