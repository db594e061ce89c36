"""The simulated board as a real process behind a pseudo-terminal, spoken to over pyserial."""

import csv
import os
import select
import signal
import subprocess
import sys
import time
import zlib

import numpy as np
import pytest

serial = pytest.importorskip("serial")

from inkreach.arms import arm_to_toml, load_arm
from inkreach.board import executed_angles
from inkreach.board.protocol import Fault, FrameReader, Identity, Status

from _board import host_frame, need_compiler, parse_frames, samples_frame

TIMEOUT = 30.0   # our bound on any single wait, generous for a busy shared machine


def _env():
    env = dict(os.environ)
    src = os.path.join(os.path.dirname(os.path.dirname(os.path.abspath(__file__))), "src")
    env["PYTHONPATH"] = src + os.pathsep + env.get("PYTHONPATH", "")
    return env


class Board:
    def __init__(self, tmp_path, drive="servo", arm="default"):
        need_compiler()
        self.trace = tmp_path / "trace.csv"
        self.proc = subprocess.Popen(
            [sys.executable, "-m", "inkreach", "simulate-board", "--arm", arm, "--speedup",
             "50", "--trace", str(self.trace), "--drive", drive],
            stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=_env())
        ready, _, _ = select.select([self.proc.stdout], [], [], 120)   # first build compiles
        assert ready, "the simulated board printed no port"
        self.port = self.proc.stdout.readline().decode().strip()
        assert self.port.startswith("/dev/"), self.port
        self.line = serial.Serial(self.port, 115200, timeout=0.02)
        self.reader = FrameReader()
        self.seq = 0
        self.seen = []

    def close(self):
        try:
            self.line.close()
        except Exception:
            pass
        if self.proc.poll() is None:
            self.proc.send_signal(signal.SIGTERM)
            try:
                self.proc.wait(10)
            except subprocess.TimeoutExpired:
                self.proc.kill()
                self.proc.wait(10)

    def _read(self):
        for m in parse_frames(self.reader, self.line.read(512)):
            if m is not None:
                self.seen.append(m)

    def send(self, wire):
        self.line.write(wire)

    def cmd(self, kind, value=None):
        self.seq = (self.seq + 1) % 256
        self.send(host_frame(kind, self.seq, value))
        return self.wait(lambda m: isinstance(m, Status) and m.seq == self.seq)

    def wait(self, pred, since=None):
        end = time.monotonic() + TIMEOUT
        start = len(self.seen) if since is None else since
        while time.monotonic() < end:
            self._read()
            for m in self.seen[start:]:
                if pred(m):
                    return m
        raise AssertionError(f"no such message within {TIMEOUT} s; saw {self.seen[-5:]}")

    def stream(self, first, rows):
        self.cmd("B", first)
        for i in range(0, len(rows), 5):
            self.seq = (self.seq + 1) % 256
            self.send(samples_frame(self.seq, first + i, rows[i:i + 5]))
        self.cmd("E", first + len(rows) - 1)
        self.cmd("G")

    def trace_rows(self):
        with open(self.trace, newline="") as fh:
            return list(csv.reader(fh))


@pytest.fixture
def board(tmp_path, request):
    b = Board(tmp_path, getattr(request, "param", "servo"))
    try:
        yield b
    finally:
        b.close()


def _stroke(start, n=60):
    """A smooth move out and back from rest at ``start`` (angle units), pen down in the middle."""
    k = np.arange(n)
    bump = (1 - np.cos(2 * np.pi * k / (n - 1))) / 2          # rest to rest
    q1 = start[0] + np.rint(40_000 * bump).astype(int)          # 4 deg out and back
    q2 = start[1] - np.rint(25_000 * bump).astype(int)
    pen = ((k > 5) & (k < n - 6)).astype(int)
    return [(int(a), int(b), int(p)) for a, b, p in zip(q1, q2, pen)]


def _check_trace_equals(board, rows, arm, drive, first_row=1):
    tr = board.trace_rows()
    assert tr[0] == ["t_s", "theta1_deg", "theta2_deg", "pen"]
    body = tr[first_row:first_row + len(rows)]
    assert len(body) == len(rows)
    got = np.array([[float(r[1]), float(r[2])] for r in body])
    sent = np.array([r[:2] for r in rows]) / 1e4
    want = executed_angles(sent, arm, drive)
    assert np.allclose(got, want, atol=1.5e-6)      # the 6 printed decimals
    # within signal rounding of what was sent: half a 1/16 us tick (0.0028 deg) or a step
    tol = 0.005625 / 2 if drive == "servo" else 0.5 / (200 * 16 / 360)
    assert np.abs(got - sent).max() <= tol + 1e-6
    assert [int(r[3]) for r in body] == [r[2] for r in rows]
    t = np.array([float(r[0]) for r in body])
    assert np.allclose(np.diff(t), 0.02, atol=1e-4)   # one row per 20 ms of board time
    return tr


@pytest.mark.parametrize("board", ["servo", "stepper"], indirect=True)
def test_streamed_samples_come_back_in_the_trace_and_a_bad_one_stops(board):
    drive = board.proc.args[-1]
    arm = load_arm("default")
    board.send(host_frame("H", 200))
    ident = board.wait(lambda m: isinstance(m, Identity))
    assert (ident.version, ident.name, ident.drive) == (1, "desk five-bar",
                                                        ("servo", "stepper").index(drive))
    assert ident.arm_hash == zlib.crc32(arm_to_toml(arm).encode("utf-8"))
    st = board.cmd("Q")
    rows = _stroke((st.q1, st.q2))
    board.stream(0, rows)
    fin = board.wait(lambda m: isinstance(m, Status) and m.state == 4, 0)
    assert fin.done == len(rows) - 1 and fin.fault == 0
    _check_trace_equals(board, rows, arm, drive)

    # a jump of 5 degrees in one period, mid-stroke: fault, pen up, never executed
    st = board.cmd("Q")
    bad = [(st.q1, st.q2, 1), (st.q1 + 3000, st.q2, 1), (st.q1 + 53_000, st.q2, 1),
           (st.q1 + 9000, st.q2, 1)]
    before = len(board.trace_rows())
    mark = len(board.seen)
    board.stream(100, bad)
    f = board.wait(lambda m: isinstance(m, Fault), mark)
    assert (f.code, f.index) == (2, 102)
    stopped = board.wait(lambda m: isinstance(m, Status) and m.state == 3, mark)
    assert stopped.pen == 0 and stopped.done == 101
    time.sleep(0.2)
    tail = board.trace_rows()[before:]
    assert [int(r[3]) for r in tail[:2]] == [1, 1]
    assert all(int(r[3]) == 0 for r in tail[2:]) and len(tail) >= 3
    top = max(float(r[1]) for r in tail)
    assert top < (st.q1 + 53_000) / 1e4 - 1      # the bad sample never ran


def test_reset_forgets_the_stream_and_keeps_the_posture(board):
    st = board.cmd("Q")
    rows = _stroke((st.q1, st.q2), 30)[:20]   # cut mid-stroke
    mark = len(board.seen)
    board.cmd("B", 0)
    for i in range(0, len(rows), 5):
        board.seq += 1
        board.send(samples_frame(board.seq, i, rows[i:i + 5]))
    board.cmd("G")
    board.wait(lambda m: isinstance(m, Status) and m.state == 3, mark)   # starved: stopped
    posture = board.cmd("Q")
    board.proc.send_signal(signal.SIGUSR1)
    time.sleep(0.3)
    after = board.cmd("Q")
    assert (after.state, after.done, after.next, after.fault, after.pen) == \
        (0, 0xFFFFFFFF, 0, 0, 0)
    assert (after.q1, after.q2) == (posture.q1, posture.q2)
    last = board.trace_rows()[-1]
    assert last[3] == "0"


def test_sigterm_ends_the_board_quietly(board):
    board.cmd("Q")
    board.proc.send_signal(signal.SIGTERM)
    assert board.proc.wait(10) == 0
    assert board.proc.stderr.read() == b""


def test_without_a_c_compiler_it_says_how_to_get_one(tmp_path):
    env = _env()
    env["PATH"] = str(tmp_path)
    env["CC"] = ""
    res = subprocess.run([sys.executable, "-m", "inkreach", "simulate-board"],
                         capture_output=True, text=True, env=env, timeout=60)
    assert res.returncode == 2 and res.stdout == ""
    lines = res.stderr.strip().splitlines()
    assert len(lines) == 1 and "apt-get install gcc" in lines[0]
