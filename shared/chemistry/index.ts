/** Public API of the chemistry layer: profile validation and per-chemistry defaults. */
export * from './types';
export {
  CHEMISTRY_DEFAULTS,
  ASSUMED_CAPACITY_AH,
  DEFAULT_SILENCE_S,
  DEFAULT_STALL_MIN,
  DEFAULT_PRECONDITION_TIMEOUT_MIN,
  PRECONDITION_TIMER_FRACTION,
  chemistryHasCv,
  type ChemistryDefaults,
} from './defaults';
export {
  profileSchema,
  parseProfile,
  profileFromChemistry,
  compensatedVPerCell,
  PROFILE_CAUTION,
  type ProfileInput,
  type ProfileOverrides,
} from './profile';
