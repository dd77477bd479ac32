/** The verdict on continuing a run a crash left open: only the same pack plainly still on charge. */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { parseProfile } from '@shared/chemistry/profile';
import { resumeVerdict, type ResumeEvidence } from '../../main/station/resume-check';

// Invented demo pack: a garden sensor's 3S Li-ion.
const parsed = parseProfile({ name: 'garden sensor 3S', chemistry: 'li-ion', cells: 3, capacityAh: 2.5 });
if (!parsed.ok) throw new Error(parsed.error);
const profile = parsed.profile;

const base: ResumeEvidence = {
  profile,
  lastPhase: 'cc',
  last: { t: 600, rxS: 1000, deviceS: 600, vbatV: 11.4, ibatA: 1.0, extra: {} },
  first: { rxS: 1120, deviceS: 720, vbatV: 11.45, ibatA: 1.0, extra: {} },
  gapS: 120,
};

test('same pack still charging, voltage continuous: continued, and the reason says so', () => {
  const v = resumeVerdict(base);
  assert.equal(v.resume, true);
  assert.equal(v.why, 'same station, still charging, pack voltage 11.400 V -> 11.450 V, 120 s gap');
});

test('anything else starts a new run, with the reason', () => {
  const cases: Array<[Partial<ResumeEvidence>, RegExp]> = [
    [{ lastPhase: 'done' }, /phase done/],
    [{ lastPhase: 'fault' }, /phase fault/],
    // 3 cells x 0.1 V = 0.30 V allowed; 10.9 V is 0.5 V below.
    [
      { first: { ...base.first!, vbatV: 10.9 } },
      /not continuous \(more than 0\.30 V apart; another pack\?\)/,
    ],
    [{ first: { ...base.first!, ibatA: 0 } }, /not charging after the restart/],
    [{ first: { ...base.first!, chg: false } }, /not charging after the restart/],
    [{ first: { ...base.first!, flt: true } }, /fault after the restart/],
    [{ first: { ...base.first!, deviceS: 3 } }, /device clock started again/],
    [{ last: { ...base.last!, ibatA: -0.2 } }, /not charging when the recorder stopped/],
    [{ first: null }, /no pack voltage arrived/],
    [{ last: null }, /no pack voltage to compare/],
  ];
  for (const [change, why] of cases) {
    const v = resumeVerdict({ ...base, ...change });
    assert.equal(v.resume, false, JSON.stringify(change));
    assert.match(v.why, why);
  }
});
