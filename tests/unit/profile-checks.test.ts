/** The profile form's own checks: unusual values warned, refusals in the form's words, the timer's note. */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { labelMessage, profileWarnings, timerHint } from '../../renderer/views/profile-checks';

test('40 Li-ion cells: a 168 V pack, above the 60 V extra-low-voltage limit (IEC 61140, from memory)', () => {
  const w = profileWarnings({ chemistry: 'li-ion', cells: 40 });
  assert.equal(w.length, 1);
  // 40 × 4.20 V/cell (Battery University BU-409) = 168 V.
  assert.match(w[0], /40 cells in series make a pack of about 168 V/);
});

test('20 A on a 6 Ah LiFePO4 pack is 3.3C: warned (lithium usually at most 1C, common practice)', () => {
  const w = profileWarnings({ chemistry: 'lifepo4', cells: 4, capacityAh: 6, chargeCurrentA: 20 });
  assert.equal(w.length, 1);
  assert.match(w[0], /20 A on a 6 Ah pack is 3\.3C/);
  // 2 A on 6 Ah (0.33C) is unremarkable.
  assert.deepEqual(profileWarnings({ chemistry: 'lifepo4', cells: 4, capacityAh: 6, chargeCurrentA: 2 }), []);
  // Lead-acid at 0.5C is past the usual 0.3C bulk rate (common practice).
  assert.equal(
    profileWarnings({ chemistry: 'lead-acid', cells: 6, capacityAh: 100, chargeCurrentA: 50 }).length,
    1,
  );
});

test('termination not below the charge current, regulation above the overvoltage limit', () => {
  const w = profileWarnings({
    chemistry: 'li-ion',
    cells: 3,
    chargeCurrentA: 1,
    terminationA: 1,
    regulationVPerCell: 4.3,
  });
  assert.equal(w.length, 2);
  assert.match(w[0], /termination current \(1 A\) is not below the charge current/);
  // 4.25 V/cell upper limit (TI E2E design note "JEITA Battery Temperature Standard").
  assert.match(w[1], /above the li-ion overvoltage limit of 4\.25 V\/cell/);
});

test('the safety timer says why it has no default and offers a common starting value', () => {
  assert.match(timerHint({ chemistry: 'lifepo4', cells: 4 }), /no default, because .*Type the capacity/);
  // 1.5 × 6 Ah ÷ 2 A = 4.5 h = 270 min (common practice rule).
  assert.match(timerHint({ chemistry: 'lifepo4', cells: 4, capacityAh: 6, chargeCurrentA: 2 }), /= 270 min/);
  assert.equal(timerHint({ chemistry: 'lifepo4', cells: 4, timerMin: 300 }), '');
});

test('a refusal names the field label, not the JSON key', () => {
  const labels: Record<string, string> = {
    'tempWindowC.1': 'Charge window, highest',
    cells: 'Cells in series',
  };
  const label = (k: string) => labels[k] ?? null;
  assert.equal(
    labelMessage('tempWindowC.1', 'tempWindowC.1: expected number (got null)', label),
    'Charge window, highest: expected number (got null)',
  );
  assert.equal(labelMessage('cells', 'cells: too big', label), 'Cells in series: too big');
  assert.equal(labelMessage(null, 'something', label), 'something');
});

test('a design value with one bound, or with its bounds swapped, is warned by its label', () => {
  const w = profileWarnings({
    chemistry: 'li-ion',
    cells: 3,
    expect: { chargeCurrentA: [0.9, null], regulationV: [12.73, 12.47], terminationA: [0.05, 0.15] },
  });
  assert.equal(w.length, 2, w.join(' | '));
  assert.match(w[0], /^Design value Charge current \(CC level\): only the lowest value is typed; give both/);
  assert.match(
    w[1],
    /^Design value Regulation voltage \(pack\): the lowest \(12\.73 V\) is above the highest \(12\.47 V\)/,
  );
});
