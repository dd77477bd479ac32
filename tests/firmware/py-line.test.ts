/**
 * The MicroPython module (firmware/micropython/taperline_line.py, run here by CPython) gives
 * the same bytes as the C library for the same readings, in every shape and at the limits;
 * the C library's lines are checked against Taperline's parser in line-property.test.ts.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import fc from 'fast-check';
import { buildPath, FIRMWARE_DIR, LineCli, make } from './firmware-build';
import { longArb, requestArb, requestText } from './line-requests';
import { join } from 'node:path';

let c: LineCli;
let py: LineCli;
before(() => {
  make(['host']);
  c = new LineCli(buildPath('build', 'host', 'tl_cli'));
  py = new LineCli('python3', [join(FIRMWARE_DIR, 'host', 'py_line_cli.py')]);
});
after(() => {
  c.close();
  py.close();
});

test('MicroPython and C build the same lines from the same readings', async () => {
  await fc.assert(
    fc.asyncProperty(
      fc.oneof({ weight: 9, arbitrary: requestArb }, { weight: 1, arbitrary: longArb }),
      async (r) => {
        const text = requestText(r);
        assert.equal(await py.request(text), await c.request(text), text.slice(0, 200));
      },
    ),
    { numRuns: 1000 },
  );
  for (const board of ['board 64 GS-0042 1.4.2', 'board 20 GS-0042 1.4.2', 'board 64 G/S 1'])
    assert.equal(await py.request(board), await c.request(board), board);
});
