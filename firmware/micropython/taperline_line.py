# taperline_line.py - builds Taperline telemetry lines from integers, for MicroPython
# (and CPython). The same output as the C library firmware/src/taperline_line.h: values
# in milli-units (mV, mA, m°C), raw ADC counts or 0/1 pins, printed in the base units
# (V, A, °C) as key=value, CSV (header line first) or JSON, each line ending in `*HH`
# (XOR of the bytes before `*`, as the NMEA 0183 sentence checksum) and `\n`.
# No floats: the text is made from integers, so the host reads exactly what was meant.

KV = 0
CSV = 1
JSON = 2
MAX_LINE = 4096  # Taperline's line limit, `*HH` included, `\n` not

ERR_FULL = 1
ERR_KEY = 2
ERR_VALUE = 4
ERR_EMPTY = 8

_WORD = "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789_.-"


def _is_word(s, is_key):
    if not s:
        return False
    for c in s:
        if c not in _WORD:
            return False
    return not (is_key and s[0] in "0123456789.-")


def fixed(value, drop, keep):
    """value / 10**drop rounded half away from zero, with `keep` decimals."""
    neg = value < 0
    mag = -value if neg else value
    if drop:
        mag = (mag + 5 * 10 ** (drop - 1)) // 10 ** drop
    digits = str(mag)
    if keep:
        digits = "0" * (keep + 1 - len(digits)) + digits if len(digits) <= keep else digits
        digits = digits[:-keep] + "." + digits[-keep:]
    return "-" + digits if neg and mag else digits


def checksum(text):
    x = 0
    for b in text.encode():
        x ^= b
    return x


class Line:
    def __init__(self, shape=KV, size=MAX_LINE + 2):
        self.shape = shape
        # As in C: `size` bytes of buffer hold the line text, `\n` and a NUL.
        self.cap = min(max(size - 2, 0), MAX_LINE)
        self.header_sent = False
        self.error = 0
        self._items = []

    def resend_header(self):
        self.header_sent = False

    def begin(self):
        self._items = []
        self.error = 0

    def _add(self, key, text):
        if not _is_word(key, True):
            self.error |= ERR_KEY
        self._items.append((key, text))

    def milli(self, key, milli, decimals=3):
        d = min(decimals, 3)
        self._add(key, fixed(milli, 3 - d, d))

    def adc(self, key, counts):
        self._add(key, fixed(counts, 0, 0))

    def time_ms(self, ms):
        self._add("t", fixed(ms, 0, 3))

    def flag(self, key, on):
        self._add(key, "1" if on else "0")

    def word(self, key, word):
        if not _is_word(word, False):
            self.error |= ERR_VALUE
        self._add(key, '"%s"' % word if self.shape == JSON else word)

    def missing(self, key):
        self._add(key, None)

    def _finish(self, body, empty):
        line = "%s*%02X" % (body, checksum(body))
        err = self.error | (ERR_FULL if len(line.encode()) > self.cap else 0) | (ERR_EMPTY if empty else 0)
        return err, line + "\n"

    def end(self):
        """The bytes to send (in CSV the header comes first, once), or None when the line
        is refused; `error` then says why (ERR_* bits)."""
        items = self._items
        out = ""
        if self.shape == CSV:
            if not self.header_sent:
                err, header = self._finish(",".join(k for k, _ in items), len(items) < 2)
                if err:
                    self.error = err
                    return None
                self.header_sent = True
                out = header
            cells = [t if t is not None else "" for _, t in items]
            err, row = self._finish(",".join(cells), not any(cells))
        elif self.shape == JSON:
            pairs = ['"%s":%s' % (k, t) for k, t in items if t is not None]
            err, row = self._finish("{" + ",".join(pairs) + "}", not pairs)
        else:
            pairs = ["%s=%s" % (k, t) for k, t in items if t is not None]
            err, row = self._finish(" ".join(pairs), not pairs)
        if err:
            self.error = err
            return out.encode() if out else None
        return (out + row).encode()

    def board(self, board_id, fw):
        """The start-up line `# board=<id> fw=<version>` (no checksum)."""
        if not (_is_word(board_id, False) and _is_word(fw, False)):
            self.error = ERR_VALUE
            return None
        line = "# board=%s fw=%s" % (board_id, fw)
        if len(line) > self.cap:
            self.error = ERR_FULL
            return None
        return (line + "\n").encode()


def scale_counts(counts, full_scale, steps):
    """counts x full_scale / steps, rounded half up: an ADC reading to milli-units."""
    return (counts * full_scale + steps // 2) // steps
