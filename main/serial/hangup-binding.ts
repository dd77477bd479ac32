/**
 * The platform's serialport binding, with one change: a read that returns zero bytes is a
 * hang-up, not "try again". A Linux tty whose other side has gone (a pty master closed, a
 * USB adapter pulled) is hung up, and read() on it returns 0 at once; the stock Unix read of
 * @serialport/bindings-cpp v13 retries a zero-byte read immediately, forever, which keeps a
 * core busy (about 4,000 reads a second) and never reports the unplug. The port is opened in
 * raw, non-blocking mode (VMIN 1, VTIME 0), so "no data yet" is EAGAIN and 0 means end of
 * file (read(2) and termios(3) manual pages, Linux man-pages project).
 *
 * The error thrown makes @serialport/stream close the port with a DisconnectedError, so the
 * serial source sees the same `close` event as for EIO or ENXIO.
 */
import { read } from 'node:fs';
import { promisify } from 'node:util';
import type { AutoDetectTypes } from '@serialport/bindings-cpp';
import { unixRead } from '@serialport/bindings-cpp/dist/unix-read';
import { SerialPort } from 'serialport';

const readAsync = promisify(read);

type FsReadAsync = NonNullable<Parameters<typeof unixRead>[0]['fsReadAsync']>;

/** fs.read that turns end-of-file into an error saying the device hung up. */
const readOrHangUp = (async (fd: number, buffer: Buffer, offset: number, length: number, position: null) => {
  const result = await readAsync(fd, buffer, offset, length, position);
  if (result.bytesRead === 0)
    throw Object.assign(new Error('the device hung up (end of file on read)'), {
      code: 'EOF',
      disconnect: true,
    });
  return result;
}) as unknown as FsReadAsync;

type UnixPortBinding = Parameters<typeof unixRead>[0]['binding'];

/** The auto-detected binding with hang-up aware reads on Linux and macOS. */
export function hangUpAwareBinding(base: AutoDetectTypes = SerialPort.binding): AutoDetectTypes {
  if (process.platform === 'win32') return base;
  const binding = {
    list: () => base.list(),
    async open(options: Parameters<AutoDetectTypes['open']>[0]) {
      const port = await base.open(options);
      const unixPort = port as unknown as UnixPortBinding;
      port.read = (buffer: Buffer, offset: number, length: number) =>
        unixRead({ binding: unixPort, buffer, offset, length, fsReadAsync: readOrHangUp });
      return port;
    },
  };
  return binding as AutoDetectTypes;
}
