"""Building and driving the board's C core for the board tests."""

import os
import struct
import subprocess

import pytest

from inkreach.arms import load_arm, parse_arm
from inkreach.board import _build
from inkreach.board.firmware_config import board_config, config_header
from inkreach.board.protocol import FrameReader, decode_message, encode_samples, frame

HERE = os.path.join(os.path.dirname(os.path.abspath(__file__)), "board_c")
NONE = 0xFFFFFFFF


def host_frame(kind, seq, value=None):
    """Wire bytes of an H, G, X or Q frame (no body) or a B or E frame (a u32 body)."""
    return frame(kind.encode("ascii"), seq, b"" if value is None else struct.pack("<I", value))


def samples_frame(seq, first, rows):
    """Wire bytes of an S frame; ``rows`` are 1 to 5 (q1, q2, pen) in angle units."""
    return encode_samples(seq, first, [r[:2] for r in rows], [r[2] for r in rows])


def parse_frames(reader, data):
    """The board messages (None for an unknown one) in the frames ``data`` completes."""
    return [decode_message(t, body) for t, _seq, body in reader.feed(data)]


def need_compiler():
    try:
        _build.find_compiler()
    except Exception as exc:  # pragma: no cover - CI installs one
        pytest.skip(str(exc))


def build_test(name, modules, arm="default", drive="servo"):
    """Compile tests/board_c/<name>.c with the listed core modules; path of the binary."""
    need_compiler()
    a = load_arm(arm) if isinstance(arm, str) else arm
    fw = _build.firmware_dir()
    srcs = [os.path.join(fw, f"ink_{m}.c") for m in modules] + [os.path.join(HERE, name + ".c")]
    return _build.build(name, srcs, config_header(board_config(a, drive)), extra_dirs=[HERE])


class Core:
    """The C core run by ``core_driver.c``: feed bytes, tick, read outputs and frames."""

    def __init__(self, arm="default", drive="servo"):
        self.exe = build_test("core_driver", [m[4:-2] for m in _build.CORE], arm, drive)
        self.script = []

    def send(self, wire):
        self.script.append("b " + wire.hex())

    def tick(self, n=1):
        self.script.append(f"t {n}")

    def reboot(self, q1, q2):
        self.script.append(f"r {q1} {q2}")

    def run(self):
        """Run the script; returns (ticks, messages) in order of occurrence.

        ``ticks`` is a list of dicts (q1, q2, pen, state, moved, fault, done);
        ``messages`` a list of (tick count so far, parsed message).
        """
        res = subprocess.run([self.exe], input="\n".join(self.script) + "\n",
                             capture_output=True, text=True, timeout=60)
        assert res.returncode == 0, res.stderr
        ticks, msgs, reader = [], [], FrameReader()
        for line in res.stdout.splitlines():
            kind, rest = line[0], line[2:]
            if kind == "T":
                v = [int(x) for x in rest.split()]
                ticks.append(dict(zip(("q1", "q2", "pen", "state", "moved", "fault", "done"),
                                      v)))
            elif kind == "W":
                for m in parse_frames(reader, bytes.fromhex(rest)):
                    msgs.append((len(ticks), m))
        return ticks, msgs


def arm_with(extra, base="default"):
    """A built-in arm's TOML with extra lines appended (a new table)."""
    from inkreach.arms.armfile import builtin_arm_text
    return parse_arm(builtin_arm_text(base) + "\n" + extra)
