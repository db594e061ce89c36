"""Pause and continue from the keyboard during `inkreach run`, through a real pseudo-terminal.

The run is spawned with ``pty.fork`` so the pseudo-terminal is its controlling
terminal and standard input, as when a user types at it; the board is the
simulated one. Every process is bounded in time and killed in ``finally``.
"""

import json
import os
import select
import signal
import sys
import termios
import time

import pytest

from test_board_run import (ENV, PY, _arm, _assert_within_limits, _coverage,  # noqa: F401
                            _interrupted_then_resumed, _mid_longest_stroke,
                            _plan, _trace, procs)

pty = pytest.importorskip("pty")

from inkreach.board.keys import KeyReader   # noqa: E402

TIMEOUT = 60.0     # our bound on any single wait, generous for a busy shared machine


@pytest.fixture(scope="module")
def servo_plan(tmp_path_factory):
    return _plan(tmp_path_factory.mktemp("plans"), "default")   # as test_board_run's


class _Tty:
    """``inkreach run`` on a pseudo-terminal we own: send keys, read what it prints."""

    def __init__(self, args):
        self.pid, self.fd = pty.fork()
        if self.pid == 0:     # pragma: no cover - the child only replaces itself
            try:
                os.execve(PY, [PY, "-m", "inkreach", *map(str, args)], ENV)
            finally:
                os._exit(127)
        self.out = b""
        self.rc = None

    def drain(self, wait=0.05):
        try:
            r, _, _ = select.select([self.fd], [], [], wait)
            if r:
                self.out += os.read(self.fd, 65536)
        except OSError:        # EIO once the child has closed the terminal
            time.sleep(wait)

    def alive(self):
        if self.rc is None:
            pid, status = os.waitpid(self.pid, os.WNOHANG)
            if pid:
                self.rc = os.waitstatus_to_exitcode(status)
        return self.rc is None

    def text(self):
        return self.out.decode("utf-8", "replace")

    def wait_for(self, what, timeout=TIMEOUT):
        end = time.monotonic() + timeout
        while what not in self.text() and time.monotonic() < end:
            self.drain()
            if not self.alive():
                self.drain()
                break
        assert what in self.text(), f"no {what!r} from the run: {self.text()[-800:]!r}"

    def wait_exit(self, timeout=TIMEOUT):
        end = time.monotonic() + timeout
        while self.alive() and time.monotonic() < end:
            self.drain()
        self.drain(0)
        assert not self.alive(), f"the run did not end: {self.text()[-800:]!r}"
        return self.rc

    def lflag(self):
        return termios.tcgetattr(self.fd)[3]

    def close(self):
        if self.alive():
            os.kill(self.pid, signal.SIGKILL)
            os.waitpid(self.pid, 0)
        os.close(self.fd)


def _wait_rows(path, n, tty, timeout=TIMEOUT):
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        tty.drain(0.01)
        assert tty.alive(), f"the run ended early: {tty.text()[-800:]!r}"
        if path.exists() and path.read_bytes().count(b"\n") > n:
            return
    raise AssertionError(f"fewer than {n} trace rows after {timeout} s")


def test_pause_stops_with_the_pen_up_and_continue_finishes(servo_plan, procs, tmp_path):
    import shutil
    plan = tmp_path / servo_plan.name
    shutil.copytree(servo_plan, plan)
    trace = tmp_path / "trace.csv"
    _, port = procs.board("default", trace, speedup="10")
    tty = _Tty(["run", plan, "--port", port])
    try:
        _wait_rows(trace, _mid_longest_stroke(plan), tty)   # p lands mid-stroke
        # cbreak while running: keys come one by one, not echoed (termios(3))
        assert not tty.lflag() & (termios.ICANON | termios.ECHO)
        os.write(tty.fd, b"p")
        tty.wait_for("press c to continue")
        tr1 = _trace(trace)
        assert tr1[-1, 3] == 0, "paused with the pen down"
        c = json.loads((plan / "run-state.json").read_text())["confirmed"]
        assert tr1[c, 3] == 1 and c + 1 < len(tr1), "the pause was not mid-stroke"
        # Still while paused: the board's trace does not grow (one second of wall
        # time is 500 periods at --speedup 10; our choice, long against the stop)
        size = trace.stat().st_size
        for _ in range(20):
            tty.drain()
        assert trace.stat().st_size == size and tty.alive()
        os.write(tty.fd, b"c")
        rc = tty.wait_exit()
        assert rc == 0, tty.text()[-800:]
        assert "finished" in tty.text()
        # the terminal is back in line mode with echo (as the pty started)
        assert tty.lflag() & termios.ICANON and tty.lflag() & termios.ECHO
    finally:
        tty.close()
    tr = _trace(trace)
    tr2 = tr[len(tr1):]
    assert len(tr2) and tr[-1, 3] == 0
    arm = _arm(plan)
    _assert_within_limits(tr, arm, "servo")
    _coverage(plan, [tr1, tr2], arm)          # every stroke once, nothing twice
    assert json.loads((plan / "run-state.json").read_text())["finished"]
    log = (plan / "run-log.txt").read_text()
    assert "paused from the keyboard" in log and "continued from the keyboard" in log


def _start_paused_mid_stroke(servo_plan, procs, tmp_path):
    import shutil
    plan = tmp_path / servo_plan.name
    shutil.copytree(servo_plan, plan)
    trace = tmp_path / "trace.csv"
    _, port = procs.board("default", trace, speedup="10")
    return plan, trace, port


def test_pause_then_q_ends_resumably(servo_plan, procs, tmp_path):
    plan, trace, port = _start_paused_mid_stroke(servo_plan, procs, tmp_path)
    tty = _Tty(["run", plan, "--port", port])
    try:
        _wait_rows(trace, 200, tty)
        os.write(tty.fd, b" ")                 # the space bar pauses too
        tty.wait_for("press c to continue")
        os.write(tty.fd, b"q")
        assert tty.wait_exit() == 130, tty.text()[-800:]
        assert "--resume" in tty.text().strip().splitlines()[-1]
        assert tty.lflag() & termios.ICANON and tty.lflag() & termios.ECHO
    finally:
        tty.close()
    assert "ended while paused" in (plan / "run-log.txt").read_text()
    _interrupted_then_resumed(plan, trace, port, "default", 130)


def test_sigterm_puts_the_terminal_back(servo_plan, procs, tmp_path):
    plan, trace, port = _start_paused_mid_stroke(servo_plan, procs, tmp_path)
    tty = _Tty(["run", plan, "--port", port])
    try:
        _wait_rows(trace, 100, tty)
        assert not tty.lflag() & termios.ICANON
        os.kill(tty.pid, signal.SIGTERM)
        assert tty.wait_exit() == -signal.SIGTERM     # it still ends as SIGTERM ends it
        assert tty.lflag() & termios.ICANON and tty.lflag() & termios.ECHO
    finally:
        tty.close()


def test_key_reader_restores_the_terminal_on_every_way_out():
    master, slave = pty.openpty()
    try:
        before = termios.tcgetattr(slave)
        with open(slave, "rb", buffering=0, closefd=False) as f:
            with pytest.raises(RuntimeError):
                with KeyReader(f) as keys:
                    assert keys.active
                    assert not termios.tcgetattr(slave)[3] & termios.ICANON
                    os.write(master, b"p")
                    assert keys.read(5.0) == b"p"
                    raise RuntimeError("any exception on the way out")
            assert termios.tcgetattr(slave) == before
            with KeyReader(f) as keys:
                keys.restore()                 # twice is harmless
            assert termios.tcgetattr(slave) == before
    finally:
        os.close(master)
        os.close(slave)


def test_key_reader_does_nothing_without_a_terminal():
    r, w = os.pipe()
    try:
        os.write(w, b"p")
        with open(r, "rb", buffering=0, closefd=False) as f, KeyReader(f) as keys:
            assert not keys.active and keys.read(0.1) == b""
        assert os.read(r, 1) == b"p"          # the key was left where it was
    finally:
        os.close(r)
        os.close(w)


def test_help_lists_keys_and_exit_status():
    import subprocess
    out = subprocess.run([PY, "-m", "inkreach", "run", "--help"], env=ENV, capture_output=True,
                         text=True, timeout=60).stdout
    for word in ("p or space", "pause", "continue", "130", "exit status"):
        assert word in out, word


def test_key_reader_stops_when_the_terminal_goes_away():
    # Linux pty(7): once the master side is closed, reading the slave gives EIO or
    # end of file; the reader then reports no more keys instead of spinning.
    master, slave = pty.openpty()
    try:
        with open(slave, "rb", buffering=0, closefd=False) as f, KeyReader(f) as keys:
            assert keys.active
            os.close(master)
            master = None
            assert keys.read(5.0) == b"" and not keys.active
    finally:
        if master is not None:
            os.close(master)
        os.close(slave)
