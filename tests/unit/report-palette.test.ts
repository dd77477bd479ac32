/** The Run report and the dashboard share one phase palette and one run-time format. */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { PHASE_PALETTE } from '@shared/display/phase-palette';
import { formatRunTime, formatRunTimeSeconds } from '@shared/display/run-time';
import { REPORT_CSS } from '../../main/report/styles';
import { clock } from '../../main/report/html';
import { PHASE_STYLES } from '../../renderer/charts/phase-style';

test('a 7-day run reads in days, never 168:00', () => {
  assert.equal(formatRunTime(7 * 86400), '7 d 0:00');
  assert.equal(formatRunTimeSeconds(7 * 86400 + 3661), '7 d 1:01:01');
  assert.equal(clock(7 * 86400), '7 d 0:00:00');
  assert.equal(formatRunTime(5400), '1:30');
});

test('CC is the same colour in the app, the report charts and the report timeline', () => {
  // The report's charts are the app's phase-style module itself (bundled), see report-html tests.
  assert.equal(PHASE_STYLES.cc.ink, PHASE_PALETTE.cc.ink);
  // The timeline's hatch lines are the palette ink at 45 % (183, 121, 26 = #b7791a).
  assert.match(
    REPORT_CSS,
    /\.ph-cc \{ background: repeating-linear-gradient\(-45deg, rgba\(183, 121, 26, 0\.45\)/,
  );
});
