/** A station's source, made by the one registry of source kinds (main/sources/registry.ts). */
import { createSource, type SourceContext } from '../sources';
import type { LineSource } from '../sources/types';
import type { SourceConfig } from './types';

export function defaultMakeSource(config: SourceConfig, context: SourceContext): LineSource {
  return createSource(config, context);
}
