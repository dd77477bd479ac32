/** An error a person caused (missing file, bad profile, bad option): one line, exit 2. */
export class UsageError extends Error {
  override name = 'UsageError';
}
