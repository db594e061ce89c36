"""The board's C core fed samples directly (no host): it executes good ones and stops on bad ones.

Limits here come straight from the built-in desk five-bar's arm file (degrees times
10 000 angle units, PROTOCOL.md), not from the board's generated configuration.
"""

import zlib

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from inkreach.arms import arm_to_toml, load_arm
from inkreach.board.protocol import Fault, Gap, Identity, Status

from _board import NONE, Core, arm_with, host_frame, samples_frame

# The built-in default arm file: theta1 [30, 210] deg, theta2 [-30, 150] deg,
# 180 deg/s, 1500 deg/s^2, home [120, 60]; period 20 ms.
LO = (300_000, -300_000)
HI = (2_100_000, 1_500_000)
HOME = (1_200_000, 600_000)
DQ = 36_000 + 1          # 180 deg/s * 0.02 s, plus one unit of slack (PROTOCOL.md)
DDQ = 6_000 + 1          # 1500 deg/s^2 * 0.02^2 s^2, plus one unit of slack


def stream(core, rows, first=0, end=True):
    """B, the samples in S frames of 5, E (optional) and G."""
    seq = 1
    core.send(host_frame("B", seq, first))
    for i in range(0, len(rows), 5):
        seq += 1
        core.send(samples_frame(seq, first + i, rows[i:i + 5]))
    if end:
        seq += 1
        core.send(host_frame("E", seq, first + len(rows) - 1))
    core.send(host_frame("G", seq + 1))


def executed(ticks):
    return [(t["q1"], t["q2"], t["pen"]) for t in ticks if t["moved"]]


def ramp_rows(start, deltas, joint=0, pen=1):
    """Rows starting at ``start`` (at rest), moving ``joint`` by the given changes."""
    q = list(start)
    rows = [(q[0], q[1], pen)]
    for d in deltas:
        q[joint] += d
        rows.append((q[0], q[1], pen))
    return rows


def assert_safe_motion(rows, start):
    """Every executed step within the speed, acceleration and joint limits."""
    q = np.array([start] + [r[:2] for r in rows], dtype=np.int64)
    assert np.all(q >= LO) and np.all(q <= HI)
    d = np.diff(q, axis=0)
    assert np.abs(d).max(initial=0) <= DQ
    if len(d) > 1:
        assert np.abs(np.diff(d, axis=0)).max() <= DDQ


def assert_fault_stop(ticks, msgs, code, bad_index, bad_row, start=HOME):
    faults = [m for _, m in msgs if isinstance(m, Fault)]
    assert [f.code for f in faults] == [code]
    assert faults[0].index == bad_index
    rows = executed(ticks)
    assert tuple(bad_row[:2]) not in [r[:2] for r in rows[bad_index:]] or bad_row[:2] == rows[-1][:2]
    done = [t["done"] for t in ticks]
    assert max(d for d in done if d != NONE) < bad_index if bad_index else all(d == NONE for d in done)
    k = next(i for i, t in enumerate(ticks) if t["fault"])
    assert all(t["pen"] == 0 for t in ticks[k:])       # pen up at once, and stays up
    assert ticks[k]["moved"] == 1                       # the stop executes at least one period
    assert ticks[-1]["state"] == 3                      # stopped
    assert_safe_motion(rows, start)                     # the ramp too
    final = [m for _, m in msgs if isinstance(m, Status)][-1]
    assert final.state == 3 and final.fault == code and final.pen == 0


def test_identity_names_the_arm_and_its_hash():
    core = Core()
    core.send(host_frame("H", 7))
    _, msgs = core.run()
    ident = msgs[0][1]
    assert isinstance(ident, Identity)
    arm = load_arm("default")
    # PROTOCOL.md: arm_hash = CRC-32/ISO-HDLC (zlib.crc32) of the canonical arm TOML
    assert (ident.version, ident.drive, ident.name) == (1, 0, "desk five-bar")
    assert ident.arm_hash == zlib.crc32(arm_to_toml(arm).encode("utf-8"))
    assert ident.period_us == 20_000 and ident.capacity >= 16
    assert isinstance(msgs[1][1], Status) and msgs[1][1].seq == 7


def test_good_stream_is_executed_one_sample_per_period():
    rows = ramp_rows(HOME, [3000, 6000, 9000, 9000, 6000, 3000, 0], pen=1)
    rows = [(r[0], r[1] + 10 * min(k, 6), k % 2) for k, r in enumerate(rows)]
    core = Core()
    stream(core, rows)
    core.tick(20)
    ticks, msgs = core.run()
    assert executed(ticks) == rows
    assert ticks[-1]["state"] == 4 and ticks[-1]["done"] == len(rows) - 1
    assert not [m for _, m in msgs if isinstance(m, Fault)]


def test_stream_ending_while_moving_brakes_then_finishes():
    rows = ramp_rows(HOME, [6000, 12000])      # holding after 12000 would be 12000 > DDQ
    core = Core()
    stream(core, rows)
    core.tick(10)
    ticks, _ = core.run()
    ex = executed(ticks)
    assert ex[:3] == rows and len(ex) > 3 and all(r[2] == 0 for r in ex[3:])
    assert_safe_motion(ex, HOME)
    assert ticks[-1]["state"] == 4


def test_waits_at_rest_after_go_until_the_first_sample():
    core = Core()
    core.send(host_frame("B", 1, 0))
    core.send(host_frame("G", 2))
    core.tick(5)
    core.send(samples_frame(3, 0, [(HOME[0], HOME[1], 0)]))
    core.send(host_frame("E", 4, 0))
    core.tick(3)
    ticks, msgs = core.run()
    assert [t["moved"] for t in ticks] == [0, 0, 0, 0, 0, 1, 0, 0]
    assert ticks[-1]["state"] == 4 and not [m for _, m in msgs if isinstance(m, Fault)]


def _near_limit_case(joint, side):
    """At rest at a limit of one joint; then a sample exactly there, then 1 unit past it."""
    start = list(HOME)
    start[joint] = LO[joint] if side == "lo" else HI[joint]
    past = list(start)
    past[joint] += -1 if side == "lo" else 1
    return tuple(start), [(start[0], start[1], 1), (past[0], past[1], 1)]


def test_one_unit_past_each_joint_limit_stops_with_pen_up():
    for joint in (0, 1):
        for side in ("lo", "hi"):
            start, rows = _near_limit_case(joint, side)
            core = Core()
            core.reboot(*start)
            stream(core, rows)
            core.tick(5)
            ticks, msgs = core.run()
            assert_fault_stop(ticks, msgs, 1, 1, rows[1], start)
            assert executed(ticks)[0] == rows[0]    # the sample at the limit itself runs
            f = [m for _, m in msgs if isinstance(m, Fault)][0]
            assert f.value == rows[1][joint]


def _speed_up(limit_extra):
    """Accelerate joint 1 at 6000 units per period to 36000, then one change above."""
    deltas = [6000, 12000, 18000, 24000, 30000, 36000, 36001, 36001 + limit_extra]
    return ramp_rows((600_000, HOME[1]), deltas)


def test_speed_step_just_above_the_limit_stops():
    rows = _speed_up(1)           # 36002 per period: 1 unit above speed * period + slack
    core = Core()
    core.reboot(600_000, HOME[1])
    stream(core, rows)
    core.tick(30)
    ticks, msgs = core.run()
    assert_fault_stop(ticks, msgs, 2, len(rows) - 1, rows[-1], (600_000, HOME[1]))
    assert [m for _, m in msgs if isinstance(m, Fault)][0].value == 36002
    # it was moving at full speed: the ramp takes several periods to rest
    assert sum(t["moved"] for t in ticks) >= len(rows) - 1 + 5


def test_speed_at_the_limit_runs():
    rows = _speed_up(0) + [(0, 0, 0)]
    rows = rows[:-1]
    core = Core()
    core.reboot(600_000, HOME[1])
    stream(core, rows, end=False)
    core.tick(len(rows))
    ticks, msgs = core.run()
    assert executed(ticks) == rows


def test_acceleration_just_above_the_limit_stops():
    deltas = [6000, 12001, 18003]   # changes of change: 6000, 6001 (allowed), 6002
    rows = ramp_rows(HOME, deltas, joint=1)
    core = Core()
    stream(core, rows)
    core.tick(10)
    ticks, msgs = core.run()
    assert_fault_stop(ticks, msgs, 3, 3, rows[3])
    assert [m for _, m in msgs if isinstance(m, Fault)][0].value == 6002


def test_pen_value_five_stops():
    rows = [(HOME[0], HOME[1], 1), (HOME[0] + 100, HOME[1], 5)]
    core = Core()
    stream(core, rows)
    core.tick(5)
    ticks, msgs = core.run()
    assert_fault_stop(ticks, msgs, 5, 1, rows[1])


def test_starving_buffer_stops_mid_stroke():
    rows = ramp_rows(HOME, [3000, 6000, 9000])
    core = Core()
    stream(core, rows, end=False)
    core.tick(12)
    ticks, msgs = core.run()
    f = [m for _, m in msgs if isinstance(m, Fault)]
    assert [x.code for x in f] == [4] and f[0].index == len(rows)
    assert executed(ticks)[:len(rows)] == rows
    k = next(i for i, t in enumerate(ticks) if t["fault"])
    assert all(t["pen"] == 0 for t in ticks[k:]) and ticks[-1]["state"] == 3
    assert_safe_motion(executed(ticks), HOME)


def test_first_sample_far_from_the_posture_is_refused():
    rows = [(HOME[0] + DDQ + 1, HOME[1], 0)]
    core = Core()
    stream(core, rows)
    core.tick(3)
    ticks, msgs = core.run()
    assert_fault_stop(ticks, msgs, 6, 0, rows[0])


def test_braking_must_fit_before_the_limit():
    # full speed toward theta1's upper limit with no room left to brake
    start = (HI[0] - 200_000, HOME[1])
    rows = ramp_rows(start, [6000, 12000, 18000, 24000, 30000, 36000, 36000, 36000])
    core = Core()
    core.reboot(*start)
    stream(core, rows)
    core.tick(30)
    ticks, msgs = core.run()
    f = [m for _, m in msgs if isinstance(m, Fault)][0]
    assert f.code == 1 and f.value > HI[0]          # where braking would have ended
    assert_safe_motion(executed(ticks), start)       # stopped inside, within accel
    assert max(r[0] for r in executed(ticks)) <= HI[0]


def test_stop_command_ramps_down_and_forgets_the_buffer():
    rows = ramp_rows((600_000, HOME[1]), [6000 * k for k in range(1, 7)] + [36000] * 20)
    core = Core()
    core.reboot(600_000, HOME[1])
    stream(core, rows[:20], end=False)
    core.tick(8)
    core.send(host_frame("X", 50))
    core.send(host_frame("X", 50))                  # a repeat is only answered
    core.tick(20)
    ticks, msgs = core.run()
    ex = executed(ticks)
    assert ex[:8] == rows[:8]
    assert all(r[2] == 0 for r in ex[8:]) and ticks[-1]["state"] == 3
    assert_safe_motion(ex, (600_000, HOME[1]))
    assert not [m for _, m in msgs if isinstance(m, Fault)]
    assert ticks[-1]["done"] == 7


def test_gap_and_repeats():
    core = Core()
    core.send(host_frame("B", 1, 10))
    core.send(samples_frame(2, 12, [(HOME[0], HOME[1], 0)]))      # gap: wants 10
    core.send(samples_frame(3, 10, [(HOME[0], HOME[1], 0)] * 3))
    core.send(samples_frame(3, 10, [(HOME[0], HOME[1], 0)] * 3))  # retransmission: ignored
    _, msgs = core.run()
    gaps = [m for _, m in msgs if isinstance(m, Gap)]
    assert [g.next for g in gaps] == [10]
    st_ = [m for _, m in msgs if isinstance(m, Status)]
    assert st_[-1].next == 13 and st_[-1].free == st_[0].free - 3


def test_reset_keeps_the_posture_and_forgets_the_rest():
    core = Core()
    core.reboot(1_000_000, 500_000)
    core.send(host_frame("Q", 9))
    _, msgs = core.run()
    s = msgs[-1][1]
    assert (s.state, s.q1, s.q2, s.pen, s.done, s.next, s.fault) == \
        (0, 1_000_000, 500_000, 0, NONE, 0, 0)


def test_step_rate_above_the_drivers_limit_stops():
    # 400 steps/s at 20 ms: 8 steps per period; 1.2 deg per period is 10.7 steps
    arm = arm_with("[stepper]\nmax_step_rate_hz = 400.0\n")
    rows = ramp_rows(HOME, [6000, 12000])
    core = Core(arm, "stepper")
    stream(core, rows)
    core.tick(10)
    ticks, msgs = core.run()
    f = [m for _, m in msgs if isinstance(m, Fault)]
    assert [x.code for x in f] == [7] and f[0].index == 2 and abs(f[0].value) > 8
    assert executed(ticks)[:2] == rows[:2]
    assert ticks[-1]["state"] == 3 and ticks[-1]["pen"] == 0


@settings(max_examples=25, deadline=None, derandomize=True)
@given(st.lists(st.tuples(st.integers(-40_000, 40_000), st.integers(-40_000, 40_000),
                          st.sampled_from([0, 1, 1, 1, 2])), min_size=1, max_size=40))
def test_whatever_the_host_sends_the_motion_stays_safe(changes):
    # Property: any sequence of samples (most breaching something) gives executed
    # outputs inside the joint limits, within speed and acceleration, pen up after a fault.
    q = list(HOME)
    rows = []
    for d1, d2, pen in changes:
        q = [q[0] + d1, q[1] + d2]
        rows.append((q[0], q[1], pen))
    core = Core()
    stream(core, rows)
    core.tick(len(rows) + 20)
    ticks, msgs = core.run()
    assert_safe_motion(executed(ticks), HOME)
    faulted = [i for i, t in enumerate(ticks) if t["fault"]]
    if faulted:
        assert all(t["pen"] == 0 for t in ticks[faulted[0]:])
        assert ticks[-1]["state"] == 3
    else:
        assert executed(ticks)[:len(rows)] == rows     # (then a braking tail, pen up)
        assert ticks[-1]["state"] == 4
        last = np.diff(np.array([HOME] + [r[:2] for r in rows]), axis=0)[-1]
        if np.abs(last).max() <= DDQ:
            assert len(executed(ticks)) == len(rows)


def _plan_rows(tmp_path_factory):
    import os
    import subprocess
    import sys
    out = tmp_path_factory.mktemp("plan") / "demo"
    root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
    env = dict(os.environ, PYTHONPATH=os.path.join(root, "src"))
    res = subprocess.run([sys.executable, "-m", "inkreach", "demo", "--out", str(out), "-q"],
                         capture_output=True, text=True, env=env, timeout=300)
    assert res.returncode == 0, res.stderr
    data = np.loadtxt(out / "joints.csv", delimiter=",", skiprows=1)
    from inkreach.board import angle_units
    u = angle_units(data[:, 1:3])
    return [(int(a), int(b), int(p)) for (a, b), p in zip(u, data[:, 3].astype(int))]


@pytest.fixture(scope="module")
def demo_rows(tmp_path_factory):
    return _plan_rows(tmp_path_factory)


@pytest.mark.parametrize("drive", ["servo", "stepper"])
def test_a_real_plan_runs_through_the_core_one_for_one(demo_rows, drive):
    rows = demo_rows
    core = Core("default", drive)
    core.send(host_frame("B", 1, 0))
    seq, sent = 1, 0
    while sent < min(60, len(rows)):
        seq += 1
        core.send(samples_frame(seq, sent, rows[sent:sent + 5]))
        sent += len(rows[sent:sent + 5])
    core.send(host_frame("E", seq + 1, len(rows) - 1))
    core.send(host_frame("G", seq + 2))
    seq += 2
    while sent < len(rows):
        core.tick(5)
        seq = (seq + 1) % 256
        core.send(samples_frame(seq, sent, rows[sent:sent + 5]))
        sent += len(rows[sent:sent + 5])
    core.tick(80)
    ticks, msgs = core.run()
    assert not [m for _, m in msgs if isinstance(m, Fault)]
    assert executed(ticks) == rows
    assert ticks[-1]["state"] == 4 and ticks[-1]["done"] == len(rows) - 1
