# The MicroPython line module driven by the same requests as tl_cli.c, for the test that
# both give the same bytes. Runs under CPython.
import os
import sys

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "micropython"))
import taperline_line as tl  # noqa: E402

SHAPES = {"kv": tl.KV, "csv": tl.CSV, "json": tl.JSON}

for request in sys.stdin:
    words = request.rstrip("\n").split(" ")
    if len(words) < 2:
        continue
    size = int(words[1])
    if words[0] == "board":
        line = tl.Line(tl.KV, size)
        data = line.board(words[2] if len(words) > 2 else "", words[3] if len(words) > 3 else "")
        sys.stdout.write(data.decode() if data else "!%d\n" % line.error)
    else:
        line = tl.Line(SHAPES[words[0]], size)
        line.begin()
        for item in words[2:]:
            parts = item.split(":")
            kind = parts[0]
            if kind == "t":
                line.time_ms(int(parts[1]))
            elif kind == "m":
                line.milli(parts[1], int(parts[2]), int(parts[3]))
            elif kind == "i":
                line.adc(parts[1], int(parts[2]))
            elif kind == "f":
                line.flag(parts[1], int(parts[2]))
            elif kind == "w":
                line.word(parts[1], parts[2])
            elif kind == "x":
                line.missing(parts[1])
        data = line.end()
        if data:
            sys.stdout.write(data.decode())
        if data is None or line.error:
            sys.stdout.write("!%d\n" % line.error)
    sys.stdout.write("=\n")
    sys.stdout.flush()
