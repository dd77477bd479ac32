/**
 * The keys of a loaded profile that the profile form has no input for (thermistor, expect, a
 * panel's temperature coefficient, chemistry-specific limits...). The form carries them through
 * unchanged, so saving it never drops part of a profile the person did not touch.
 */
export function keysNotShown(
  profile: Readonly<Record<string, unknown>>,
  shownKeys: ReadonlySet<string>,
): Record<string, unknown> {
  return Object.fromEntries(Object.entries(profile).filter(([key]) => !shownKeys.has(key)));
}

/** What the form saves: the carried keys, overridden by everything the form shows. */
export function withCarriedKeys(
  carried: Readonly<Record<string, unknown>>,
  fromForm: Readonly<Record<string, unknown>>,
): Record<string, unknown> {
  return { ...carried, ...fromForm };
}
