/**
 * Feeds lines to the one pipeline when the profile may not be known yet. Without a profile
 * (a captured log replayed bare), lines are held until the first pack voltage says how many
 * cells there are, and a Li-ion pack of that size is assumed, with a note saying so.
 */
import { parseProfile } from '@shared/chemistry/profile';
import type { ResolvedProfile } from '@shared/chemistry/types';
import { createPipeline, type LineOutcome, type Pipeline } from '@shared/engine/pipeline';
import { createLineParser } from '@shared/telemetry/parse-line';

export class ProfiledRun {
  private pipeline: Pipeline | null;
  private pending: { text: string; rxS: number; tooLong: boolean }[] = [];
  private readonly probe = createLineParser({});
  private readonly decoder = new TextDecoder('utf-8');
  /** Set when the profile was assumed. */
  note: string | null = null;

  constructor(
    profile: ResolvedProfile | null,
    private readonly onOutcome: (outcome: LineOutcome) => void,
    private readonly onNote: (note: string) => void = () => {},
  ) {
    this.pipeline = profile ? createPipeline(profile) : null;
  }

  push(text: string, rxS: number, tooLong: boolean): void {
    if (this.pipeline) {
      this.onOutcome(this.pipeline.pushLine(text, rxS, tooLong));
      return;
    }
    this.pending.push({ text, rxS, tooLong });
    const probe = this.probe.parse(text, rxS, tooLong);
    if (probe.kind === 'sample' && probe.sample.vbatV !== undefined) this.start(probe.sample.vbatV);
  }

  /** push for a line still in bytes (the replay fast path); the bytes are not kept. */
  pushBytes(bytes: Uint8Array, from: number, to: number, rxS: number, tooLong: boolean): void {
    if (this.pipeline) this.onOutcome(this.pipeline.pushBytes(bytes, from, to, rxS, tooLong));
    else this.push(this.decoder.decode(bytes.subarray(from, to)), rxS, tooLong);
  }

  /** The pipeline after the last line (a profile is assumed now if none was yet). */
  finish(): Pipeline {
    if (!this.pipeline) this.start(null);
    return this.pipeline as Pipeline;
  }

  private start(vbatV: number | null): void {
    const { profile, note } = assumedProfile(vbatV);
    this.note = note;
    this.onNote(note);
    const pipeline = createPipeline(profile);
    this.pipeline = pipeline;
    const pending = this.pending;
    this.pending = [];
    for (const line of pending) this.onOutcome(pipeline.pushLine(line.text, line.rxS, line.tooLong));
  }
}

/** Li-ion at 3.7 V nominal per cell ("common practice") gives the cell count of an unknown pack. */
export function assumedProfile(vbatV: number | null): { profile: ResolvedProfile; note: string } {
  const cells = vbatV === null ? 1 : Math.min(64, Math.max(1, Math.round(vbatV / 3.7)));
  const result = parseProfile({ name: `assumed ${cells}S li-ion`, chemistry: 'li-ion', cells });
  if (!result.ok) throw new Error(`assumed profile refused: ${result.error}`);
  const note =
    vbatV === null
      ? 'no --profile given and no pack voltage in the input; assumed a 1-cell Li-ion pack. Pass --profile for real limits.'
      : `no --profile given; assumed a ${cells}-cell Li-ion pack from the first pack voltage ${vbatV.toFixed(2)} V. ` +
        "Pass --profile for the pack's real limits.";
  return { profile: result.profile, note };
}
