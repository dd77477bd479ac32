import { test } from 'node:test';
import assert from 'node:assert/strict';
import { appendChecksum, nmeaChecksum, splitChecksum } from '@shared/telemetry/checksum';

// Published NMEA 0183 sentences, each with the page that printed it (XOR re-computed: all agree).
const VALID: { line: string; source: string }[] = [
  {
    line: '$GPRMC,155123.000,A,4043.8432,N,07359.7653,W,0.15,83.25,200407,,*28',
    source: 'tigoe.net pcomp code, 2007/11',
  },
  {
    line: '$GPGGA,015808.00,2726.53758,S,15126.05255,E,1,08,1.0,365.1,M,39.5,M,,*79',
    source: 'R package em38 docs, nmea_check',
  },
  {
    line: '$GPGGA,000003.071,7900.56904,N,16607.52019,W,1,09,0.8,4.64,M,,,,*26',
    source: 'MATLAB File Exchange 36385 "gps_chksum"',
  },
  {
    line: '$GNGLL,2239.37849,N,11400.75600,E,123254.00,A,A*7F',
    source: 'CSDN blog weixin_46672094/107082756',
  },
];

for (const { line, source } of VALID) {
  test(`published NMEA sentence verifies: ${source}`, () => {
    const split = splitChecksum(line);
    assert.equal(split.checksum, 'ok'); // source: the page named in the test title
    const star = line.lastIndexOf('*');
    assert.equal(split.body, line.slice(1, star)); // the `$` start delimiter is not part of the body
    assert.equal(nmeaChecksum(line.slice(0, star)), parseInt(line.slice(star + 1), 16)); // source: as above
    assert.equal(appendChecksum(line.slice(0, star)), line); // re-printing gives the published line
  });
}

test('the published bad vector is rejected: $HEHDT,178.3,T*1E XORs to 0x22', () => {
  // Printed on a web page with *1E, but its XOR is 0x22 (computed here): a reject case.
  const split = splitChecksum('$HEHDT,178.3,T*1E');
  assert.equal(split.checksum, 'bad');
  assert.equal(nmeaChecksum('$HEHDT,178.3,T'), 0x22);
});

test('definition: XOR of the characters between $ and *, commas included (Vaisala WXT530 User Guide, "NMEA 0183 v3.0 Checksum Computation")', () => {
  assert.equal(nmeaChecksum('$A'), 0x41);
  assert.equal(nmeaChecksum('!AB'), 0x41 ^ 0x42); // `!` is the other start delimiter
  assert.equal(nmeaChecksum('A,B'), 0x41 ^ 0x2c ^ 0x42);
  assert.equal(nmeaChecksum(''), 0);
});

test('lines without a checksum, and lower-case hex digits', () => {
  assert.deepEqual(splitChecksum('t=1 vbat=8.2'), { body: 't=1 vbat=8.2', checksum: 'none' });
  assert.deepEqual(splitChecksum('x*Z1'), { body: 'x*Z1', checksum: 'none' }); // not hex: not a checksum
  assert.deepEqual(splitChecksum('*'), { body: '*', checksum: 'none' });
  const printed = appendChecksum('t=1 vbat=8.2');
  assert.match(printed, /\*[0-9A-F]{2}$/); // upper-case hex as NMEA prints it
  assert.equal(splitChecksum(printed.slice(0, -2) + printed.slice(-2).toLowerCase()).checksum, 'ok');
  assert.equal(appendChecksum('A'), 'A*41'); // 0x41, two digits
  assert.equal(appendChecksum('AA'), 'AA*00'); // zero padded
});
