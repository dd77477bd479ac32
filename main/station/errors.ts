/** A station configuration that cannot be used (bad profile, duplicate id, too many stations). */
export class StationConfigError extends Error {
  override name = 'StationConfigError';
  constructor(
    message: string,
    /** The profile key that was refused, when a profile was the cause. */
    readonly key: string | null = null,
  ) {
    super(message);
  }
}
