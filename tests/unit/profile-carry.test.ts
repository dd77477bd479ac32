import assert from 'node:assert/strict';
import { test } from 'node:test';
import { keysNotShown, withCarriedKeys } from '../../renderer/views/profile-carry';

test('saving the profile form keeps the keys it has no input for, and the form wins where it shows one', () => {
  const loaded = {
    name: 'trail-camera 2S Li-ion (demo)',
    chemistry: 'li-ion',
    cells: 2,
    thermistor: { model: 'beta', r25: 10000, beta: 3435, pullupOhm: 10000, adcMax: 4095 },
    expect: { chargeCurrentA: [0.45, 0.55] },
    panelTempCoeffPctPerC: -0.36,
  };
  const shown = new Set(['name', 'chemistry', 'cells', 'fields']);
  const carried = keysNotShown(loaded, shown);
  assert.deepEqual(Object.keys(carried).sort(), ['expect', 'panelTempCoeffPctPerC', 'thermistor']);
  const saved = withCarriedKeys(carried, { chemistry: 'li-ion', cells: 3 });
  assert.equal(saved.cells, 3);
  assert.deepEqual(saved.thermistor, loaded.thermistor);
  assert.deepEqual(saved.expect, loaded.expect);
  assert.equal(saved.panelTempCoeffPctPerC, -0.36);
});
