"""`inkreach run` against the simulated board, in real processes: streams, faults, refusals.

Every process is bounded in time and killed in ``finally``. The plans are
small (the shipped emblem, centre line, 40 mm) so a run takes a second or two
of wall time at ``--speedup 10``: 500 samples a second, half of what the
115200-baud line carries, so a host held up for a moment on a busy 2-core
machine does not starve the board's buffer (at 20 the line ran at its limit
and one such pause starved it).
"""

import json
import os
import re
import selectors
import shutil
import signal
import subprocess
import sys
import time
import warnings
from pathlib import Path

import numpy as np
import pytest
from scipy.spatial import cKDTree

from inkreach.arms import parse_arm

ROOT = Path(__file__).resolve().parents[1]
PY = sys.executable
ENV = dict(os.environ, PYTHONPATH=str(ROOT / "src") + os.pathsep + os.environ.get("PYTHONPATH",
                                                                                  ""))
SPEEDUP = "10"

pytestmark = pytest.mark.skipif(shutil.which("cc") is None and shutil.which("gcc") is None,
                                reason="needs a C compiler for the simulated board")


def _inkreach(*args, timeout=90):
    return subprocess.run([PY, "-m", "inkreach", *map(str, args)], env=ENV, timeout=timeout,
                          capture_output=True, text=True)


def _first_line(proc, timeout=60.0):
    sel = selectors.DefaultSelector()
    sel.register(proc.stdout, selectors.EVENT_READ)
    end = time.monotonic() + timeout
    buf = b""
    while b"\n" not in buf and time.monotonic() < end:
        if sel.select(timeout=0.5):
            chunk = os.read(proc.stdout.fileno(), 4096)
            if not chunk:
                break
            buf += chunk
    sel.close()
    if b"\n" not in buf:
        raise AssertionError(f"no port line from {proc.args}: {buf!r}")
    return buf.split(b"\n", 1)[0].decode().strip()


class _Procs:
    """Processes started by a test; all killed at the end."""

    def __init__(self):
        self.procs = []

    def start(self, args, **kw):
        p = subprocess.Popen(args, env=ENV, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                             **kw)
        self.procs.append(p)
        return p

    def board(self, arm, trace, drive="servo", speedup=SPEEDUP):
        p = self.start([PY, "-m", "inkreach", "simulate-board", "--arm", arm, "--drive",
                        drive, "--trace", str(trace), "--speedup", speedup])
        return p, _first_line(p)

    def relay(self, port, *opts):
        p = self.start([PY, str(ROOT / "tests" / "_fault_relay.py"), port, *map(str, opts)])
        return p, _first_line(p, 10)

    def run(self, plan, port, *flags):
        return self.start([PY, "-m", "inkreach", "run", str(plan), "--port", port, *flags])

    def close(self):
        for p in self.procs:
            if p.poll() is None:
                p.kill()
            try:
                p.communicate(timeout=10)
            except Exception:
                pass


@pytest.fixture
def procs():
    ps = _Procs()
    try:
        yield ps
    finally:
        ps.close()


def _finish(p, timeout=60):
    try:
        out, err = p.communicate(timeout=timeout)
    except subprocess.TimeoutExpired:
        p.kill()
        raise AssertionError(f"{p.args} did not end within {timeout} s")
    return p.returncode, err.decode()


def _plan(tmp, arm):
    out = tmp / f"plan-{arm}"
    r = _inkreach("plan", ROOT / "demo_images" / "emblem.png", "--style", "centerline",
                  "--size", "40", "--arm", arm, "--out", out, "-q")
    assert r.returncode == 0, r.stderr
    return out


@pytest.fixture(scope="module")
def plans(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("plans")
    return {"servo": _plan(tmp, "default"), "stepper": _plan(tmp, "serial")}


def _copy(plan, tmp):
    dst = tmp / plan.name
    shutil.copytree(plan, dst)
    return dst


def _rows(plan):
    return np.loadtxt(plan / "joints.csv", delimiter=",", skiprows=1, ndmin=2)


def _trace(path):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")      # an empty trace is a valid answer
        return np.loadtxt(path, delimiter=",", skiprows=1, ndmin=2).reshape(-1, 4)


def _arm(plan):
    return parse_arm(json.loads((plan / "plan.json").read_text())["arm"], source="plan.json")


# Signal resolution, half a unit (from the arm files): servo 180 deg over
# 2000 us in 1/16 us ticks; stepper 360 deg over 200 x 16 microsteps x 3.
_HALF = {"servo": 0.5 * 180.0 / (2000 * 16), "stepper": 0.5 * 360.0 / (200 * 16 * 3)}


def _one_line_error(err):
    lines = [ln for ln in err.strip().splitlines() if ln.strip()]
    assert len(lines) == 1, err
    return lines[0]


def _last_line(err):
    return err.replace("\r", "\n").strip().splitlines()[-1]


def _assert_within_limits(tr, arm, drive, period=0.02):
    # Finite differences of everything the board executed, split where it held
    # still between streams. Slack: one signal unit per difference (rounding of
    # the read-back angles), our choice, far below the limits.
    lim = arm.limits
    res = 2 * _HALF[drive]
    t = tr[:, 0]
    cuts = np.flatnonzero(np.diff(t) > 1.5 * period) + 1
    for seg in np.split(tr[:, 1:3], cuts):
        if len(seg) < 2:
            continue
        d1 = np.diff(seg, axis=0)
        assert np.abs(d1).max() <= np.rad2deg(lim.max_speed) * period + 2 * res + 1e-4
        if len(seg) > 2:
            d2 = np.diff(seg, 2, axis=0)
            assert np.abs(d2).max() <= np.rad2deg(lim.max_accel) * period ** 2 + 4 * res + 2e-4
        lo = np.rad2deg([lim.theta1[0], lim.theta2[0]]) - res
        hi = np.rad2deg([lim.theta1[1], lim.theta2[1]]) + res
        assert np.all(seg >= lo) and np.all(seg <= hi)


def _assert_equals_plan(tr, rows, drive, pen=None):
    """The trace holds the plan's rows one for one, after a pen-up approach if any."""
    assert len(tr) >= len(rows)
    tol = _HALF[drive] + 1e-4 + 1e-6
    # the approach (if any) ends at the plan's start: the best-fitting offset
    errs = [np.abs(tr[o:o + len(rows), 1:3] - rows[:, 1:3]).max()
            for o in range(len(tr) - len(rows) + 1)]
    start = int(np.argmin(errs))
    assert np.all(tr[:start, 3] == 0)
    tr = tr[start:]
    got = tr[:len(rows)]
    # One-for-one: angles within half a signal unit plus the wire's 1e-4 deg.
    assert np.abs(got[:, 1:3] - rows[:, 1:3]).max() <= _HALF[drive] + 1e-4 + 1e-6
    assert np.array_equal(got[:, 3], rows[:, 3] if pen is None else pen)
    # After the last sample only still, pen-up rows may follow (the end brake).
    assert np.all(tr[len(rows):, 3] == 0)


def _coverage(plan, traces, arm, tol=0.3):
    """Every stroke drawn once: pen-down trace pieces mapped onto the plan's strokes.

    Each run of pen-down trace rows is assigned to the plan stroke most of its
    rows are nearest to, each row to an arc length along that stroke (searched
    forward, so a stroke crossing itself is followed, not jumped), and
    consecutive rows cover the interval between their arc lengths. Every
    stroke must be covered with no gap and no overlap longer than ``tol`` mm
    (our bound: a resume re-starts from the last executed point, projected
    within the 0.05 mm chord tolerance, plus signal rounding).
    """
    strokes = [np.asarray(s, float).reshape(-1, 2)
               for s in json.loads((plan / "plan.json").read_text())["strokes"]]
    dense, sid, arc = [], [], []
    for k, s in enumerate(strokes):
        if len(s) == 1:
            dense.append(s), sid.append([k]), arc.append([0.0])
            continue
        seg = np.hypot(*np.diff(s, axis=0).T)
        c = np.concatenate([[0], np.cumsum(seg)])
        u = np.arange(0, c[-1], 0.02)
        u = np.append(u, c[-1])
        dense.append(np.stack([np.interp(u, c, s[:, 0]), np.interp(u, c, s[:, 1])], 1))
        sid.append(np.full(len(u), k)), arc.append(u)
    dense, sid, arc = np.concatenate(dense), np.concatenate(sid), np.concatenate(arc)
    tree = cKDTree(dense)
    cover = [[] for _ in strokes]
    dots = np.zeros(len(strokes), int)
    for tr in traces:
        down = tr[:, 3] == 1
        edges = np.diff(np.concatenate([[0], down.astype(int), [0]]))
        for a, b in zip(np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)):
            xy = arm.fk(np.deg2rad(tr[a:b, 1:3]))
            d, i = tree.query(xy)
            assert d.max() < 0.2, "a pen-down sample far from every stroke"
            k = np.bincount(sid[i]).argmax()
            if len(strokes[k]) == 1:
                dots[k] += 1
                continue
            mine = np.flatnonzero(sid == k)
            pts, arcs = dense[mine], arc[mine]
            pos, prev = [], None
            for p in xy:
                dist = np.hypot(*(pts - p).T)
                if prev is None:
                    # a closed stroke passes its start twice: take the earliest
                    # point as near as the nearest
                    j = np.flatnonzero(dist <= dist.min() + 0.1)[0]
                else:
                    win = np.flatnonzero((arcs >= prev - 0.3) & (arcs <= prev + 3.0))
                    j = win[np.argmin(dist[win])]
                prev = arcs[j]
                pos.append(prev)
            pos = np.asarray(pos)
            cover[k].append((pos.min(), pos.max()))
            assert np.all(np.diff(pos) >= -0.3), "the pen went backwards along a stroke"
    for k, s in enumerate(strokes):
        if len(s) == 1:
            assert dots[k] >= 1, f"dot {k} never drawn"
            continue
        L = float(np.hypot(*np.diff(s, axis=0).T).sum())
        iv = sorted(cover[k])
        assert iv, f"stroke {k} never drawn"
        assert iv[0][0] <= tol and iv[-1][1] >= L - tol, f"stroke {k} not drawn to its ends"
        total = sum(b - a for a, b in iv)
        for (a0, b0), (a1, b1) in zip(iv, iv[1:]):
            assert a1 - b0 <= tol, f"stroke {k}: gap from {b0:.2f} to {a1:.2f} mm"
        assert total <= L + tol * len(iv), f"stroke {k} drawn {total:.2f} mm of {L:.2f}"


def _wait_trace_rows(path, n, proc, timeout=60):
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        if proc.poll() is not None:
            raise AssertionError(f"the run ended before {n} rows: {proc.stderr.read()!r}")
        try:
            with open(path, "rb") as f:
                if f.read().count(b"\n") > n:
                    return
        except OSError:
            pass
        time.sleep(0.01)
    raise AssertionError(f"fewer than {n} trace rows after {timeout} s")


def _mid_longest_stroke(plan, lead=20, timeout=60):
    """The trace row ``lead`` rows before the middle of the plan's longest pen-down run
    among those ending 100 rows or more before the plan's end, in the stream a fresh
    run is sending (read from run-state.json once the run has written it: a pen-up
    approach may come first).

    Waiting for that many trace rows and then stopping lands the stop mid-stroke,
    with plan rows after that stroke that a resume sends unchanged (the last 40 rows
    are compared in ``_interrupted_then_resumed``).
    """
    pen = _rows(plan)[:, 3]
    edges = np.diff(np.concatenate([[0], (pen == 1).astype(int), [0]]))
    a, b = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)
    keep = b <= len(pen) - 100
    a, b = a[keep], b[keep]
    k = np.argmax(b - a)
    assert b[k] - a[k] > 80, "the test plan needs a stroke of more than 80 rows"
    end = time.monotonic() + timeout
    while True:
        try:
            sm = json.loads((plan / "run-state.json").read_text())["stream"]
            break
        except (OSError, ValueError, KeyError):
            assert time.monotonic() < end, "the run wrote no run-state.json"
            time.sleep(0.01)
    return len(sm["prefix_pen"]) - sm["tail_from"] + int(a[k] + b[k]) // 2 - lead


def _wait_still(path, timeout=30):
    """Until the trace stops growing (the board is at rest)."""
    end = time.monotonic() + timeout
    size = -1
    while time.monotonic() < end:
        s = os.path.getsize(path)
        if s == size:
            return
        size = s
        time.sleep(0.4)
    raise AssertionError("the board never came to rest")


@pytest.mark.parametrize("drive", ["servo", "stepper"])
def test_stream_runs_one_for_one(plans, procs, tmp_path, drive):
    plan = _copy(plans[drive], tmp_path)
    arm = "default" if drive == "servo" else "serial"
    trace = tmp_path / "trace.csv"
    _, port = procs.board(arm, trace, drive)
    rc, err = _finish(procs.run(plan, port))
    assert rc == 0, err
    tr = _trace(trace)
    _assert_equals_plan(tr, _rows(plan), drive)
    if drive == "servo":     # the board boots at the plan's start: not one row more
        assert len(tr) == len(_rows(plan))
    _assert_within_limits(tr, _arm(plan), drive)
    state = json.loads((plan / "run-state.json").read_text())
    assert state["finished"] and state["confirmed"] == state["stream_rows"] - 1
    assert "finished" in (plan / "run-log.txt").read_text()
    assert "rows" in err and "100%" in err      # the progress bar went to stderr


def test_rehearsal_holds_the_pen_up(plans, procs, tmp_path):
    plan = _copy(plans["servo"], tmp_path)
    trace = tmp_path / "trace.csv"
    _, port = procs.board("default", trace)
    rc, err = _finish(procs.run(plan, port, "--rehearse"))
    assert rc == 0, err
    rows = _rows(plan)
    _assert_equals_plan(_trace(trace), rows, "servo", pen=np.zeros(len(rows)))


def test_bit_flips_and_dropped_bytes_are_survived(plans, procs, tmp_path):
    plan = _copy(plans["servo"], tmp_path)
    trace = tmp_path / "trace.csv"
    # A slower clock: a 64-sample buffer lasts 128 ms of wall time, enough for
    # retransmissions on a loaded test machine.
    _, port = procs.board("default", trace, speedup="10")
    _, relayed = procs.relay(port, "--flip", "0.0005", "--drop", "0.0005", "--seed", "7")
    rc, err = _finish(procs.run(plan, relayed))
    assert rc == 0, err
    tr = _trace(trace)
    _assert_equals_plan(tr, _rows(plan), "servo")
    resent = re.search(r"(\d+) resent", (plan / "run-log.txt").read_text())
    assert resent and int(resent.group(1)) > 0     # the faults really hit samples


def _interrupted_then_resumed(plan, trace, port, arm, first_rc, resume_port=None, drive="servo",
                              mid_stroke=False, reset=False):
    tr1 = _trace(trace)
    assert tr1[-1, 3] == 0, "the trace must end with the pen up"
    if mid_stroke:
        # trace row c is stream sample c: the last confirmed one had the pen down
        c = json.loads((plan / "run-state.json").read_text())["confirmed"]
        assert tr1[c, 3] == 1 and c + 1 < len(tr1)
    rc, err = _finish(subprocess.Popen(
        [PY, "-m", "inkreach", "run", str(plan), "--port", resume_port or port, "--resume"],
        env=ENV, stdout=subprocess.PIPE, stderr=subprocess.PIPE))
    assert rc == 0, err
    tr = _trace(trace)
    tr2 = tr[len(tr1):]
    assert tr[-1, 3] == 0
    if reset:
        # A reset stops the motors where they are: no firmware can brake
        # after it, so the one step into the reset row is left out; every
        # sample the board chose to execute, before and after, is checked.
        _assert_within_limits(tr1[:-1], _arm(plan), drive)
        _assert_within_limits(tr2, _arm(plan), drive)
    else:
        _assert_within_limits(tr, _arm(plan), drive)
    _coverage(plan, [tr1, tr2], _arm(plan))
    # The resumed stream ends with the plan's own last rows, one for one.
    rows = _rows(plan)
    k = 40
    best = min(np.abs(tr2[o:o + k, 1:3] - rows[-k:, 1:3]).max()
               for o in range(max(len(tr2) - k - 5, 0), len(tr2) - k + 1))
    assert best <= _HALF[drive] + 1e-4 + 1e-6
    state = json.loads((plan / "run-state.json").read_text())
    assert state["finished"]
    return tr1, tr2


def test_ctrl_c_stops_with_the_pen_up_and_resume_finishes(plans, procs, tmp_path):
    plan = _copy(plans["servo"], tmp_path)
    trace = tmp_path / "trace.csv"
    _, port = procs.board("default", trace, speedup="10")
    run = procs.run(plan, port)
    _wait_trace_rows(trace, _mid_longest_stroke(plan), run)
    run.send_signal(signal.SIGINT)
    rc, err = _finish(run)
    assert rc == 130, err
    line = _last_line(err)
    assert "--resume" in line and "pen up" in line
    _interrupted_then_resumed(plan, trace, port, "default", rc, mid_stroke=True)


def test_stall_beyond_the_watchdog_stops_and_resume_finishes(plans, procs, tmp_path):
    plan = _copy(plans["servo"], tmp_path)
    trace = tmp_path / "trace.csv"
    _, port = procs.board("default", trace)
    relay, relayed = procs.relay(port, "--stall-after", "0.4", "--stall-for", "1.5")
    rc, err = _finish(procs.run(plan, relayed))
    assert rc == 1, err
    assert "starved" in _last_line(err) and "--resume" in _last_line(err)
    relay.kill()     # the resume talks to the board directly
    relay.wait(10)
    _wait_still(trace)
    _interrupted_then_resumed(plan, trace, port, "default", rc)


def test_line_cut_longer_than_the_host_waits_then_resume_finishes(plans, procs, tmp_path):
    plan = _copy(plans["servo"], tmp_path)
    trace = tmp_path / "trace.csv"
    _, port = procs.board("default", trace)
    relay, relayed = procs.relay(port, "--stall-after", "0.3", "--stall-for", "4.5")
    rc, err = _finish(procs.run(plan, relayed))
    assert rc == 1, err
    assert "stopped answering" in _last_line(err) and "--resume" in _last_line(err)
    relay.kill()
    relay.wait(10)
    _wait_still(trace)
    _interrupted_then_resumed(plan, trace, port, "default", rc)


def test_host_killed_then_resume_finishes(plans, procs, tmp_path):
    plan = _copy(plans["servo"], tmp_path)
    trace = tmp_path / "trace.csv"
    _, port = procs.board("default", trace, speedup="10")
    run = procs.run(plan, port)
    _wait_trace_rows(trace, 300, run)
    run.kill()
    run.wait(10)
    _wait_still(trace)           # the board starves and stops itself
    _interrupted_then_resumed(plan, trace, port, "default", None)


def test_board_reset_then_resume_finishes(plans, procs, tmp_path):
    plan = _copy(plans["servo"], tmp_path)
    trace = tmp_path / "trace.csv"
    board, port = procs.board("default", trace, speedup="10")
    run = procs.run(plan, port)
    _wait_trace_rows(trace, 300, run)
    board.send_signal(signal.SIGUSR1)
    rc, err = _finish(run)
    assert rc == 1, err
    assert "restarted" in _last_line(err)
    _wait_still(trace)
    _interrupted_then_resumed(plan, trace, port, "default", rc, reset=True)


def test_stepper_ctrl_c_then_resume(plans, procs, tmp_path):
    plan = _copy(plans["stepper"], tmp_path)
    trace = tmp_path / "trace.csv"
    _, port = procs.board("serial", trace, "stepper", speedup="10")
    run = procs.run(plan, port)
    _wait_trace_rows(trace, _mid_longest_stroke(plan), run)
    run.send_signal(signal.SIGINT)
    rc, err = _finish(run)
    assert rc == 130, err
    _interrupted_then_resumed(plan, trace, port, "serial", rc, drive="stepper", mid_stroke=True)


# --- refusals: one line, non-zero exit, the board never moves ------------------------------

def test_refuses_a_plan_for_another_arm(plans, procs, tmp_path):
    plan = _copy(plans["stepper"], tmp_path)      # planned for the serial arm
    trace = tmp_path / "trace.csv"
    _, port = procs.board("default", trace)
    rc, err = _finish(procs.run(plan, port))
    assert rc == 2
    assert "built for the arm" in _one_line_error(err)
    assert len(_trace(trace)) == 0


def test_refuses_a_tampered_stream(plans, procs, tmp_path):
    plan = _copy(plans["servo"], tmp_path)
    lines = (plan / "joints.csv").read_text().splitlines()
    cells = lines[400].split(",")
    cells[1] = f"{float(cells[1]) + 3.0:.6f}"      # a 3 degree jump in one row
    lines[400] = ",".join(cells)
    (plan / "joints.csv").write_text("\n".join(lines) + "\n")
    trace = tmp_path / "trace.csv"
    _, port = procs.board("default", trace)
    rc, err = _finish(procs.run(plan, port))
    assert rc == 2
    assert "safety check" in _one_line_error(err)
    assert len(_trace(trace)) == 0


_FAKE_BOARD = r"""
import os, pty, struct, sys, tty, select, time
sys.path.insert(0, sys.argv[1])
from inkreach.board.protocol import FrameReader, frame
m, s = pty.openpty(); tty.setraw(s)
print(os.ttyname(s), flush=True)
r = FrameReader(); seen = []
end = time.monotonic() + 30
while time.monotonic() < end:
    if select.select([m], [], [], 0.2)[0]:
        for t, seq, body in r.feed(os.read(m, 4096)):
            seen.append(t.decode())
            if t == b"H":
                os.write(m, frame(b"I", seq, struct.pack("<BBHII", 2, 0, 64, 20000, 0)
                                  + b"desk five-bar"))
            sys.stderr.write("".join(seen) + "\n"); sys.stderr.flush()
"""


def test_refuses_a_board_speaking_another_version(plans, procs, tmp_path):
    plan = _copy(plans["servo"], tmp_path)
    fake = procs.start([PY, "-c", _FAKE_BOARD, str(ROOT / "src")])
    port = _first_line(fake, 20)
    rc, err = _finish(procs.run(plan, port))
    assert rc == 2
    assert "protocol version 2" in _one_line_error(err)
    fake.kill()
    _, ferr = fake.communicate(timeout=10)
    seen = ferr.decode().split()
    assert seen and set(seen[-1]) <= {"H"}      # nothing but hello: no B, S or G
