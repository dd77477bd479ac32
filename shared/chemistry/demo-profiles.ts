/**
 * Invented demo packs shared by the simulator's scenarios and the dashboard's presets, so the
 * two never drift apart. Demo data only: a real pack's limits come from its cell datasheet.
 */

/** A garden sensor's 3S 2.5 Ah Li-ion pack charged at 1 A from a bench adapter (invented). */
export function gardenSensorPack() {
  return {
    chemistry: 'li-ion' as const,
    cells: 3,
    capacityAh: 2.5,
    chargeCurrentA: 1.0,
    terminationA: 0.1,
    timerMin: 240,
    tempWindowC: [0, 45] as [number, number],
  };
}
