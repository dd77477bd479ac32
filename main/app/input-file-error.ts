/** A file a person gave (profile, rack) cannot be used: one line naming the file and what is wrong. */
export class InputFileError extends Error {
  override name = 'InputFileError';
}
