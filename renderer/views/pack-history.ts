/**
 * Per-pack history in the Runs view: every run of the same board id (or, for runs without one,
 * the same profile name), oldest first, with the charge and energy it took in, the engine's
 * internal-resistance estimate, and each against the reference run, so a pack that fades or
 * whose resistance climbs month by month shows it.
 */
import { h } from '../dom';
import { formatClock, formatDuration } from '../format';
import type { RunListRow } from '../wire';

/** What ties runs to one pack: the board id when the run has one, else the profile name. */
export function packKey(run: RunListRow): string {
  return run.boardId ? `board ${run.boardId}` : `profile ${run.profileName}`;
}

/** Packs with at least two runs, most runs first. */
export function packKeys(runs: readonly RunListRow[]): { key: string; count: number }[] {
  const counts = new Map<string, number>();
  for (const r of runs) counts.set(packKey(r), (counts.get(packKey(r)) ?? 0) + 1);
  return [...counts]
    .filter(([, n]) => n >= 2)
    .map(([key, count]) => ({ key, count }))
    .sort((a, b) => b.count - a.count || a.key.localeCompare(b.key));
}

export interface PackHistoryRow {
  run: RunListRow;
  /** Charge taken in against the first run of the pack, %; null for the first. */
  ahChangePct: number | null;
  /** The run's internal resistance (engine's last estimate), milliohms; null when none was recorded. */
  irMilliohm: number | null;
  /** Internal resistance against the reference run's, %; null for the reference or when either is unknown. */
  irChangePct: number | null;
}

/** The runs of one pack, oldest first; only runs that completed count as a capacity reference. */
export function packHistory(runs: readonly RunListRow[], key: string): PackHistoryRow[] {
  const mine = runs.filter((r) => packKey(r) === key).sort((a, b) => a.startRxS - b.startRxS);
  const ref = mine.find((r) => r.endReason === 'completed') ?? mine[0];
  const ir = (r: RunListRow | undefined) =>
    (r?.internalResistanceOhm ?? 0) > 0 ? r!.internalResistanceOhm! : null;
  // Resistance is compared with the first completed run that has an estimate (a run without a
  // current step has none).
  const irRef =
    mine.find((r) => r.endReason === 'completed' && ir(r) !== null) ?? mine.find((r) => ir(r) !== null);
  return mine.map((run) => {
    const irOhm = ir(run);
    const refOhm = ir(irRef);
    return {
      run,
      ahChangePct: run === ref || !ref || !(ref.ah > 0) ? null : ((run.ah - ref.ah) / ref.ah) * 100,
      irMilliohm: irOhm === null ? null : irOhm * 1000,
      irChangePct:
        run === irRef || irOhm === null || refOhm === null ? null : ((irOhm - refOhm) / refOhm) * 100,
    };
  });
}

function signedPct(pct: number): string {
  return `${pct >= 0 ? '+' : '−'}${Math.abs(pct).toFixed(1)} %`;
}

export function renderPackHistory(target: HTMLElement, runs: readonly RunListRow[], key: string): void {
  const rows = packHistory(runs, key);
  target.replaceChildren(
    h(
      'table',
      { class: 'runs-table pack-history' },
      h('caption', {}, `${key}: ${rows.length} runs, oldest first`),
      h(
        'thead',
        {},
        h(
          'tr',
          {},
          ...[
            'Run',
            'Started',
            'Duration',
            'End',
            'Verdict',
            'Charge in',
            'Energy in',
            'Change',
            'Internal resistance',
            'IR change',
          ].map((c) => h('th', { scope: 'col' }, c)),
        ),
      ),
      h(
        'tbody',
        {},
        ...rows.map(({ run, ahChangePct, irMilliohm, irChangePct }) =>
          h(
            'tr',
            { 'data-run': run.id },
            h('th', { scope: 'row' }, String(run.id)),
            h('td', {}, formatClock(run.startRxS)),
            h('td', { class: 'num' }, formatDuration(run.durationS)),
            h('td', {}, run.endReason ?? 'recording'),
            h('td', {}, run.verdict ?? 'not judged'),
            h('td', { class: 'num' }, `${run.ah.toFixed(3)} Ah`),
            h('td', { class: 'num' }, `${run.wh.toFixed(2)} Wh`),
            h('td', { class: 'num' }, ahChangePct === null ? 'reference' : signedPct(ahChangePct)),
            h('td', { class: 'num' }, irMilliohm === null ? '–' : `${irMilliohm.toFixed(0)} mΩ`),
            h(
              'td',
              { class: 'num' },
              irChangePct !== null ? signedPct(irChangePct) : irMilliohm !== null ? 'reference' : '–',
            ),
          ),
        ),
      ),
    ),
    h(
      'p',
      { class: 'quiet' },
      'The reference is the first completed run. A run that stopped early took in less for that reason alone; compare completed runs. Internal resistance is the engine’s last estimate of the run, from a step in the charge current (whole pack, wiring and contacts included), so compare runs at a similar temperature; a dash means the run had no such step or was recorded before it was kept.',
    ),
  );
}
