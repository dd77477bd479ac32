/**
 * "Assume a profile when none is given", once for every caller (stations, replay, diagnose,
 * the Run report). Without a profile, lines are held until the first sample shows the pack
 * voltage; a Li-ion pack of the cell count that fits it is assumed (3.7 V nominal per cell,
 * common practice). Holding is bounded: after MAX_ASSUME_LINES lines without a pack voltage a
 * one-cell pack is assumed, so an input without `vbat` never holds memory without end.
 */
import { parseProfile } from '../chemistry/profile';
import type { ResolvedProfile } from '../chemistry/types';
import { createLineParser } from '../telemetry/parse-line';
import { createPipeline, type LineOutcome, type Pipeline } from './pipeline';

/** Lines held while a profile is assumed; past this the pack is taken as one cell. */
export const MAX_ASSUME_LINES = 100;

export interface HeldLine {
  text: string;
  rxS: number;
  tooLong: boolean;
}

export interface AssumedProfileJson {
  name: string;
  chemistry: 'li-ion';
  cells: number;
}

/** The assumed profile's JSON for a first pack voltage (null = none seen: one cell). */
export function assumedProfileJson(vbatV: number | null): AssumedProfileJson {
  const cells =
    vbatV === null || !Number.isFinite(vbatV) ? 1 : Math.min(64, Math.max(1, Math.round(vbatV / 3.7)));
  return { name: `assumed ${cells}S li-ion`, chemistry: 'li-ion', cells };
}

/** The sentence that says a profile was assumed, and how to give the real one. */
export function assumedProfileNote(vbatV: number | null, howToGive: string): string {
  const json = assumedProfileJson(vbatV);
  return vbatV === null
    ? `no profile given and no pack voltage seen; assumed a 1-cell Li-ion pack. ${howToGive} for the pack's real limits; follow the cell maker's datasheet.`
    : `no profile given; assumed a ${json.cells}-cell Li-ion pack from the first pack voltage ${vbatV.toFixed(2)} V. ${howToGive} for the pack's real limits; follow the cell maker's datasheet.`;
}

export function resolveAssumed(vbatV: number | null): ResolvedProfile {
  const result = parseProfile(assumedProfileJson(vbatV));
  if (!result.ok) throw new Error(`assumed profile refused: ${result.error}`);
  return result.profile;
}

export interface AssumeDecision {
  vbatV: number | null;
  profileJson: AssumedProfileJson;
  profile: ResolvedProfile;
  /** Every line pushed so far, in order, to be fed to the pipeline now. */
  held: HeldLine[];
}

/** Holds lines until a profile can be assumed; `push` answers the decision once. */
export class ProfileAssumer {
  private readonly probe = createLineParser({});
  private held: HeldLine[] = [];
  private decided = false;

  /** The decision when this line settles it (pack voltage seen, or the bound reached), else null. */
  push(line: HeldLine): AssumeDecision | null {
    if (this.decided) throw new Error('ProfileAssumer: the profile was already assumed');
    this.held.push(line);
    const probe = this.probe.parse(line.text, line.rxS, line.tooLong);
    const vbatV = probe.kind === 'sample' && probe.sample.vbatV !== undefined ? probe.sample.vbatV : null;
    if (vbatV === null && this.held.length < MAX_ASSUME_LINES) return null;
    return this.decide(vbatV);
  }

  /** The input ended (or the caller cannot wait): decide with what was seen. */
  finish(): AssumeDecision {
    return this.decide(null);
  }

  private decide(vbatV: number | null): AssumeDecision {
    this.decided = true;
    const held = this.held;
    this.held = [];
    return { vbatV, profileJson: assumedProfileJson(vbatV), profile: resolveAssumed(vbatV), held };
  }
}

/**
 * Feeds lines to the one pipeline when the profile may not be known yet (a captured log
 * replayed bare): a given profile is used at once, else one is assumed as above.
 */
export class ProfiledRun {
  private pipeline: Pipeline | null;
  private assumer: ProfileAssumer | null;
  private readonly decoder = new TextDecoder('utf-8');
  /** Set when the profile was assumed. */
  note: string | null = null;

  constructor(
    profile: ResolvedProfile | null,
    private readonly onOutcome: (outcome: LineOutcome) => void,
    private readonly onNote: (note: string) => void = () => {},
    private readonly howToGive = 'Pass --profile',
  ) {
    this.pipeline = profile ? createPipeline(profile) : null;
    this.assumer = profile ? null : new ProfileAssumer();
  }

  push(text: string, rxS: number, tooLong: boolean): void {
    if (this.pipeline) {
      this.onOutcome(this.pipeline.pushLine(text, rxS, tooLong));
      return;
    }
    const decision = this.assumer!.push({ text, rxS, tooLong });
    if (decision) this.start(decision);
  }

  /** push for a line still in bytes (the replay fast path); the bytes are not kept. */
  pushBytes(bytes: Uint8Array, from: number, to: number, rxS: number, tooLong: boolean): void {
    if (this.pipeline) this.onOutcome(this.pipeline.pushBytes(bytes, from, to, rxS, tooLong));
    else this.push(this.decoder.decode(bytes.subarray(from, to)), rxS, tooLong);
  }

  /** The pipeline after the last line (a profile is assumed now if none was yet). */
  finish(): Pipeline {
    if (!this.pipeline) this.start(this.assumer!.finish());
    return this.pipeline!;
  }

  private start(decision: AssumeDecision): void {
    this.assumer = null;
    this.note = assumedProfileNote(decision.vbatV, this.howToGive);
    this.onNote(this.note);
    const pipeline = createPipeline(decision.profile);
    this.pipeline = pipeline;
    for (const line of decision.held) this.onOutcome(pipeline.pushLine(line.text, line.rxS, line.tooLong));
  }
}
