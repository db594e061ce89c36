"""``inkreach run PLAN_DIR --port PORT [--rehearse] [--resume]``: drive the arm."""

import argparse
import json
import os
import signal
import sys
import tempfile
import time
import zlib

import numpy as np

from ..errors import InkreachError
from . import protocol as P

__all__ = ["add_run_command", "run_plan"]

_STATE = "run-state.json"
_LOG = "run-log.txt"
_EPILOG = """examples:
  inkreach simulate-board --arm default          # prints a port such as /dev/pts/5
  inkreach run my-plan --port /dev/pts/5 --rehearse
  inkreach run my-plan --port /dev/ttyACM0
  inkreach run my-plan --port /dev/ttyACM0 --resume   # after Ctrl-C or a fault

keys (only when standard input is a terminal):
  p or space   pause: controlled stop (pen up, slowing within the acceleration
               limit), then wait with the arm still
  c            continue after a pause: pen-up approach along a checked path to
               where it stopped, pen down, and on (the --resume path)
  q            while paused: end the run here (continue later with --resume)
  Ctrl-C       controlled stop with the pen up, then exit

exit status:
  0    the plan was drawn to the end; the arm is at rest with the pen up
  1    the board stopped on a fault, restarted, or stopped answering (pen up);
       continue with --resume
  2    refused before anything moved (failed safety check, another arm or
       protocol version, no board, bad options)
  130  stopped on request (Ctrl-C, or q while paused); continue with --resume

Safety: rehearse with the pen lifted and the arm unloaded, keep hands clear and a
power switch within reach. Ctrl-C stops the arm in a controlled way with the pen up."""


def add_run_command(sub, commands):
    """Register ``run`` on the ``inkreach`` sub-parsers and its handler in ``commands``."""
    r = sub.add_parser("run", help="stream a saved plan to a board and draw it",
                       description="Check a saved plan again, ask the board who it is, and "
                                   "stream the plan to it over a serial line, with credit "
                                   "flow control and retransmission. Writes run-log.txt and "
                                   "run-state.json into the plan folder.",
                       epilog=_EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    r.add_argument("plan_dir", metavar="PLAN_DIR", help="folder written by inkreach plan")
    r.add_argument("--port", required=True,
                   help="serial device (/dev/ttyUSB0, COM3) or a pyserial URL")
    r.add_argument("--rehearse", action="store_true",
                   help="run the whole plan with the pen held up")
    r.add_argument("--resume", action="store_true",
                   help="continue an interrupted run from where the board stopped")
    commands["run"] = lambda args: run_plan(args.plan_dir, args.port, rehearse=args.rehearse,
                                            resume=args.resume)


def _digest(folder):
    h = 0
    for name in ("plan.json", "joints.csv"):
        with open(os.path.join(folder, name), "rb") as f:
            h = zlib.crc32(f.read(), h)
    return h


def _write_json(folder, name, data):
    """Write ``name`` atomically (a temporary file renamed over it)."""
    try:
        fd, tmp = tempfile.mkstemp(prefix="." + name, dir=folder)
        with os.fdopen(fd, "w", encoding="utf-8") as f:
            json.dump(data, f, indent=1)
            f.flush()
            os.fsync(f.fileno())
        os.replace(tmp, os.path.join(folder, name))
    except OSError as e:
        raise InkreachError(f"cannot write {name} in {folder} ({e}); make the plan folder "
                            "writable") from None


def _log(folder, line):
    stamp = time.strftime("%Y-%m-%d %H:%M:%S", time.gmtime())
    with open(os.path.join(folder, _LOG), "a", encoding="utf-8") as f:
        f.write(f"{stamp} UTC  {line}\n")


def _plan_drive(arm):
    have = [d for d in ("servo", "stepper") if getattr(arm, d, None) is not None]
    return {"servo": 0, "stepper": 1}[have[0]] if len(have) == 1 else None


def _compare_identity(ident, arm, period):
    """One line saying what differs between the board and the plan, or None."""
    from .identity import arm_hash, board_name
    name = board_name(arm)
    if ident.version != P.PROTOCOL_VERSION:
        return (f"the board speaks protocol version {ident.version}, this host speaks "
                f"version {P.PROTOCOL_VERSION}; build the firmware from this inkreach with "
                "inkreach firmware")
    if ident.name != name:
        return (f"the board was built for the arm {ident.name!r}, the plan is for {name!r}; "
                "plan for the board's arm or rebuild the firmware")
    if ident.arm_hash != arm_hash(arm):
        return (f"the board was built for another version of the arm {name!r} (arm hash "
                f"{ident.arm_hash:08x}, the plan's is {arm_hash(arm):08x}); rebuild the "
                "firmware from the plan's arm file")
    drive = _plan_drive(arm)
    if drive is not None and ident.drive != drive:
        names = {0: "servo", 1: "stepper"}
        return (f"the board drives {names.get(ident.drive, ident.drive)} motors, the plan's "
                f"arm has {names[drive]} calibration; rebuild the firmware with the right "
                "drive")
    if ident.period_us != int(round(period * 1e6)):
        return (f"the board runs a {ident.period_us} us period, the plan one of "
                f"{period * 1e6:.0f} us; plan again with --period "
                f"{ident.period_us / 1e6:g} or rebuild the firmware")
    return None


class _Interrupt:
    def __init__(self):
        self.hit = False

    def __call__(self, *_):
        self.hit = True


def _progress(total, initial):
    try:
        from tqdm import tqdm
    except ImportError:  # pragma: no cover - tqdm ships with the dependencies
        return None
    return tqdm(total=total, initial=initial, unit="row", file=sys.stderr, mininterval=0.3,
                bar_format="{l_bar}{bar}| {n_fmt}/{total_fmt} rows "
                           "[{elapsed} elapsed, {remaining} left]")


_PAUSED = -1


def run_plan(folder, port, *, rehearse=False, resume=False):
    """Check, hand-shake and stream a saved plan; returns the exit status.

    When standard input is a terminal, ``p`` (or space) pauses: the same
    controlled stop as Ctrl-C, then a wait; ``c`` continues along the path
    ``--resume`` takes (a checked pen-up approach, pen down, on), and ``q``
    or Ctrl-C while paused ends the run (exit status 130, resumable later).
    """
    from .keys import KeyReader

    folder = os.fspath(folder)
    with KeyReader() as keys:
        while True:
            code = _run_once(folder, port, rehearse, resume, keys)
            if code != _PAUSED:
                return code
            if not _wait_to_continue(keys):
                _log(folder, "ended while paused; pen up")
                print(f"inkreach: stopped with the pen up; continue with: inkreach run "
                      f"{folder} --port {port} --resume", file=sys.stderr)
                return 130
            _log(folder, "continued from the keyboard")
            resume = True


def _wait_to_continue(keys):
    """Wait for ``c`` (True) or ``q`` / Ctrl-C (False) while the arm stands still."""
    from .keys import CONTINUE_KEYS, QUIT_KEYS
    try:
        while True:
            got = keys.read(0.2).lower()
            for b in got:
                if bytes([b]) in CONTINUE_KEYS:
                    return True
                if bytes([b]) in QUIT_KEYS:
                    return False
            if not keys.active:      # the terminal went away: do not wait for ever
                return False
    except KeyboardInterrupt:
        return False


class _PauseKey:
    """``should_stop`` hook: true once ``p`` or space was pressed."""

    def __init__(self, keys):
        self.keys = keys
        self.hit = False

    def __call__(self):
        from .keys import PAUSE_KEYS
        if not self.hit and self.keys.active and self.keys.pressed(PAUSE_KEYS):
            self.hit = True
        return self.hit


def _run_once(folder, port, rehearse, resume, keys):
    """One stream from a fresh check and hand-shake; exit status or ``_PAUSED``."""
    from ..check import check_plan
    from . import resume as R
    from .stream import Link, handshake, query, stop_board, stream_samples

    chk = check_plan(folder)
    if not chk.ok:
        raise InkreachError(f"the plan in {folder} fails the safety check, nothing was sent: "
                            f"{chk.problem}")
    arm = chk.arm
    with open(os.path.join(folder, "plan.json"), encoding="utf-8") as f:
        meta = json.load(f)
    rows = np.loadtxt(os.path.join(folder, "joints.csv"), delimiter=",", skiprows=1, ndmin=2)
    period = float(meta.get("stats", {}).get("period_s", 0.02))
    motion = meta.get("options", {})          # chord_tol, tip_speed, corner_blend of the plan
    q_rows, pen_rows, xy_rows = np.deg2rad(rows[:, 1:3]), rows[:, 3].astype(np.int8), rows[:, 4:6]
    strokes = [np.asarray(s, float).reshape(-1, 2) for s in meta.get("strokes", [])]
    if len(R.stroke_runs(pen_rows)) != len(strokes):
        raise InkreachError(f"joints.csv in {folder} has {len(R.stroke_runs(pen_rows))} "
                            f"pen-down runs but plan.json {len(strokes)} strokes; plan again")
    digest = _digest(folder)
    state = None
    if resume:
        try:
            with open(os.path.join(folder, _STATE), encoding="utf-8") as f:
                state = json.load(f)
        except (OSError, ValueError):
            raise InkreachError(f"no readable {_STATE} in {folder}: there is no interrupted "
                                "run to resume; run without --resume") from None
        if state.get("digest") != digest:
            raise InkreachError(f"{_STATE} in {folder} belongs to another plan; run without "
                                "--resume to start over")
        if state.get("finished"):
            raise InkreachError(f"the run in {folder} already finished; run without --resume "
                                "to draw it again")
        rehearse = rehearse or bool(state.get("rehearse"))

    link = Link(port)
    try:
        ident = handshake(link)
        if ident is None:
            raise InkreachError(f"no board answers on {port}; check the cable, the port and "
                                "the baud rate (115200)")
        why = _compare_identity(ident, arm, period)
        if why:
            raise InkreachError(why + "; nothing was sent")
        st = query(link)
        if st is None:
            raise InkreachError(f"the board on {port} stopped answering; nothing was sent")
        if st.state in (1, 2):
            if not resume:
                raise InkreachError("the board is moving; wait until it stops, or stop it, "
                                    "then run again with --resume")
            st = stop_board(link)
            if st is None or st.state in (1, 2):
                raise InkreachError("the board does not come to a stop; switch the motors off")
        posture_u = np.array([st.q1, st.q2], dtype=np.int64)
        posture = np.deg2rad(P.from_units(posture_u))

        if resume:
            cursor = _cursor_from_board(state, st, pen_rows, xy_rows, q_rows, strokes)
            attempt = int(state["attempt"]) + 1
        else:
            prior = _read_state(folder)
            if prior and not prior.get("finished") and prior.get("digest") == digest:
                raise InkreachError(f"the last run of {folder} was interrupted; continue it "
                                    "with --resume, or delete run-state.json to start over")
            start = P.to_units(rows[0, 1:3])
            at_start = not np.any(np.abs(start - posture_u) > 1)
            cursor = None if at_start else R.Cursor(0 if len(strokes) else -1)
            attempt = int(prior["attempt"]) + 1 if prior else 1
        attempt = (attempt - 1) % 250 + 1
        if cursor is None:
            q_send, pen_send = q_rows, pen_rows.copy()
            if rehearse:
                pen_send[:] = 0
            stream_map = {"prefix_xy": [], "prefix_pen": [], "prefix_units": [], "stroke": -1,
                          "s0": 0.0, "tail_from": 0, "before": -1}
            units = P.to_units(rows[:, 1:3])
        else:
            if resume:
                prefix, tail_from, k, s0, q_send, pen_send = R.resume_stream(
                    cursor, posture, arm, q_rows, pen_rows, strokes, period, rehearse=rehearse,
                    motion=motion)
            else:   # a pen-up approach from where the motors are to the plan's start
                prefix, tail_from, k, s0, q_send, pen_send = R.approach_stream(
                    posture, arm, q_rows, pen_rows, strokes, period, rehearse=rehearse,
                    motion=motion)
            units = P.to_units(np.rad2deg(q_send))
            units[0] = posture_u   # start exactly where the motors are
            npre = len(prefix.q)
            stream_map = {"prefix_xy": np.round(prefix.xy, 4).tolist(),
                          "prefix_pen": prefix.pen.astype(int).tolist(),
                          "prefix_units": units[:npre].tolist(), "stroke": int(k),
                          "s0": float(s0), "tail_from": int(tail_from),
                          "before": int(k) if resume else (0 if len(strokes) else -1)}
        base = attempt << 24
        state = {"format": 1, "digest": digest, "rows": int(len(rows)), "attempt": attempt,
                 "base": base, "rehearse": bool(rehearse), "stream": stream_map,
                 "stream_rows": int(len(units)), "confirmed": -1, "finished": False,
                 "port": port}
        _write_json(folder, _STATE, state)
        what = "rehearsal (pen up)" if rehearse else "run"
        _log(folder, f"{'resumed ' if resume else ''}{what} started on {port}: "
                     f"{len(units)} samples, board {ident.name!r} drive {ident.drive}")

        stop = _Interrupt()
        pause = _PauseKey(keys)
        old = signal.signal(signal.SIGINT, stop)
        bar = _progress(len(units), 0)
        last_write = [0.0]

        def on_done(d):
            state["confirmed"] = int(d)
            if bar is not None:
                bar.update(d + 1 - bar.n)
            now = time.monotonic()
            if now - last_write[0] > 0.3:
                last_write[0] = now
                try:
                    _write_json(folder, _STATE, state)
                except InkreachError:
                    pass   # never abort a moving arm over a file; the end writes again

        try:
            out = stream_samples(link, units, pen_send, base, on_done=on_done,
                                 should_stop=lambda: stop.hit or pause())
        except BaseException:
            stop_board(link)      # whatever went wrong here, the arm stops first
            raise
        finally:
            signal.signal(signal.SIGINT, old)
            if bar is not None:
                bar.close()
        state["confirmed"] = int(out.done)
        state["finished"] = out.kind == "finished"
        _write_json(folder, _STATE, state)
        row_txt = f"sample {out.done + 1} of {len(units)}"
        again = f"inkreach run {folder} --port {port} --resume"
        if out.kind == "finished":
            _log(folder, f"finished: {len(units)} samples executed, {out.resent} resent "
                         "after losses on the line")
            print(f"finished: {len(units)} samples executed; the arm is at rest with the pen "
                  "up")
            return 0
        if out.kind == "interrupted" and pause.hit and not stop.hit:
            _log(folder, f"paused from the keyboard after {row_txt}; pen up")
            print(f"inkreach: paused with the pen up after {row_txt}; press c to continue, "
                  "q to stop here", file=sys.stderr)
            return _PAUSED
        if out.kind == "interrupted":
            _log(folder, f"stopped on request after {row_txt}; pen up")
            print(f"inkreach: stopped with the pen up after {row_txt}; continue with: {again}",
                  file=sys.stderr)
            return 130
        if out.kind == "fault":
            f = out.fault
            code = f.code if f is not None else out.status.fault if out.status else 0
            why = P.FAULT_NAMES.get(code, f"code {code}")
            at = f" at sample {f.index - base + 1}" if f is not None and f.index != P.NONE \
                and f.index >= base else ""
            _log(folder, f"board fault: {why}{at}; stopped after {row_txt}")
            print(f"inkreach: the board stopped on a fault ({why}{at}) after {row_txt}, pen "
                  f"up; continue with: {again}", file=sys.stderr)
            return 1
        if out.kind == "reset":
            _log(folder, f"board reset detected after {row_txt}")
            print(f"inkreach: the board restarted during the run after {row_txt}; the pen is "
                  f"up; continue with: {again}", file=sys.stderr)
            return 1
        _log(folder, f"line lost after {row_txt}; a controlled stop was requested")
        print(f"inkreach: the board stopped answering after {row_txt}; a controlled stop was "
              f"requested (the board also stops itself when its buffer runs dry); check the "
              f"line, then continue with: {again}", file=sys.stderr)
        return 1
    finally:
        link.close()


def _cursor_from_board(state, st, pen_rows, xy_rows, q_rows, strokes):
    """Where the interrupted run stands, from the board's report and run-state.json."""
    from . import resume as R
    from .stream import _posture_match

    base = int(state["base"])
    sm = state["stream"]
    npre = len(sm["prefix_pen"])
    nrows = int(state["stream_rows"])
    done = int(state.get("confirmed", -1))
    if st.done != P.NONE and base <= st.done < base + nrows:
        done = max(done, st.done - base)     # the board's own count is authoritative
    elif st.done == P.NONE:
        # The board restarted: its motors stay at the last sample it executed.
        tail = P.to_units(np.rad2deg(q_rows[sm["tail_from"]:]))
        pre = np.asarray(sm["prefix_units"], dtype=np.int64).reshape(-1, 2)
        units = np.concatenate([pre, tail]) if npre else tail
        j = _posture_match(units, max(done, 0), min(done + 200, nrows), (st.q1, st.q2))
        if j is not None:
            done = max(done, j)
    if done >= npre:
        return R.cursor_after_row(sm["tail_from"] + done - npre, pen_rows, xy_rows, strokes)
    k = sm["stroke"]
    if done >= 0 and k >= 0 and sm["prefix_pen"][done]:
        return R.Cursor(k, max(float(sm["s0"]), R.arc_position(strokes[k], sm["prefix_xy"][done])))
    return R.Cursor(int(sm["before"]), float(sm["s0"]) if sm["before"] == k else 0.0)


def _read_state(folder):
    try:
        with open(os.path.join(folder, _STATE), encoding="utf-8") as f:
            return json.load(f)
    except (OSError, ValueError):
        return None
