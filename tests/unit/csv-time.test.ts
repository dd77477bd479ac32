/** CSV export times: ISO 8601 with the machine's UTC offset, the same instant as the Unix seconds. */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { isoWithZone } from '../../main/recorder/reader';

const withTz = (tz: string, fn: () => void) => {
  const old = process.env.TZ;
  process.env.TZ = tz;
  try {
    fn();
  } finally {
    if (old === undefined) delete process.env.TZ;
    else process.env.TZ = old;
  }
};

test('ISO 8601 with the zone offset (CET in winter: +01:00; a half-hour zone: −03:30)', () => {
  // 1764684309.25 s = 2025-12-02T14:05:09.250Z (GNU date -u -d @1764684309).
  withTz('Europe/Berlin', () => assert.equal(isoWithZone(1764684309.25), '2025-12-02T15:05:09.250+01:00'));
  withTz('America/St_Johns', () => assert.equal(isoWithZone(1764684309.25), '2025-12-02T10:35:09.250-03:30'));
  withTz('UTC', () => assert.equal(isoWithZone(1764684309.25), '2025-12-02T14:05:09.250+00:00'));
  // Whatever the zone, it parses back to the same instant.
  withTz('Asia/Kolkata', () => assert.equal(Date.parse(isoWithZone(1764684309.25)), 1764684309250));
});
