"""The streamer: feeds samples to a board with credit and go-back-N retransmission.

The board answers every host frame with a status (``A``) and reports at
least every 10 executed samples while running; the host keeps at most
``next + free`` (from the latest status) samples sent, resends from the
board's ``next`` after a gap report or a quiet time-out, and watches the
reported state for the end of the stream, a stop, a fault or a reset.
"""

import time
from dataclasses import dataclass

import numpy as np

from ..errors import InkreachError
from . import protocol as P

__all__ = ["Link", "Outcome", "handshake", "query", "stop_board", "stream_samples"]

_RTO = 0.1           # s without progress before going back to the board's next (chosen:
#                      every S frame is answered at once, a round trip at 115200 baud is
#                      about 10 ms; well under a real 64-sample buffer's 1.28 s)
_LINE_LOST = 3.0     # s without any valid frame: the line is lost (chosen: > 10 RTOs)
_STOP_WAIT = 15.0    # s to wait for the board to report it has stopped


class Link:
    """A serial line to the board (a device path or any pyserial URL)."""

    def __init__(self, port, baudrate=115200):
        import serial
        try:
            self.ser = serial.serial_for_url(port, baudrate=baudrate, timeout=0,
                                             write_timeout=2.0)
        except (serial.SerialException, ValueError, OSError) as e:
            raise InkreachError(f"cannot open the port {port} ({e}); give the board's serial "
                                "device or a pyserial URL with --port") from None
        self.reader = P.FrameReader()
        self.seq = 0
        self.last_rx = time.monotonic()

    def next_seq(self):
        self.seq = (self.seq + 1) & 0xFF
        return self.seq

    def send(self, data):
        import serial
        try:
            self.ser.write(data)
        except (serial.SerialException, OSError):
            pass   # a line that drops bytes: the time-outs take care of it

    def poll(self, wait=0.005):
        """Messages received within ``wait`` seconds (at least one read)."""
        import serial
        end = time.monotonic() + wait
        out = []
        while True:
            try:
                n = self.ser.in_waiting
                data = self.ser.read(n if n else 1)
            except (serial.SerialException, OSError):
                data = b""
            if data:
                for t, _, body in self.reader.feed(data):
                    m = P.decode_message(t, body)
                    if m is not None:
                        out.append(m)
                        self.last_rx = time.monotonic()
            if out or time.monotonic() >= end:
                return out
            if not data:
                time.sleep(0.001)

    def close(self):
        try:
            self.ser.close()
        except Exception:  # pragma: no cover - closing a broken line
            pass


def _ask(link, make, want, timeout=_LINE_LOST, resend=_RTO):
    """Send a frame (same seq on every resend) until a message ``want`` accepts arrives."""
    seq = link.next_seq()
    data = make(seq)
    end = time.monotonic() + timeout
    got = []
    while time.monotonic() < end:
        link.send(data)
        t_resend = time.monotonic() + resend
        while time.monotonic() < t_resend:
            for m in link.poll(0.01):
                got.append(m)
                if want(m, seq):
                    return m, got
    return None, got


def handshake(link, timeout=6.0):
    """The board's :class:`~inkreach.board.protocol.Identity`, or None when it is silent.

    The default wait covers boards that restart when the port opens (a
    bootloader's first seconds).
    """
    m, _ = _ask(link, P.encode_hello, lambda m, s: isinstance(m, P.Identity), timeout=timeout)
    return m


def query(link):
    """The board's status now, or None when it is silent."""
    m, _ = _ask(link, P.encode_query, lambda m, s: isinstance(m, P.Status) and m.seq == s)
    return m


def stop_board(link, wait=_STOP_WAIT):
    """Ask for a controlled stop and wait until the board reports it is still.

    Returns the last status (state stopped, finished or idle), or None when
    the board does not answer.
    """
    m, got = _ask(link, P.encode_stop, lambda m, s: isinstance(m, P.Status) and m.seq == s)
    st = m
    end = time.monotonic() + wait
    while st is not None and st.state in (1, 2) and time.monotonic() < end:
        msgs = link.poll(0.05)
        sts = [x for x in msgs if isinstance(x, P.Status)]
        if sts:
            st = sts[-1]
        elif time.monotonic() - link.last_rx > 0.5:
            st = query(link) or st
    return st


@dataclass
class Outcome:
    """How a stream ended.

    ``kind`` is ``"finished"``, ``"interrupted"`` (stop asked), ``"fault"``
    (the board refused a sample or starved), ``"reset"`` (the board lost
    its state) or ``"lost"`` (no answer); ``done`` is the last executed
    sample as an offset into the stream (-1: none), ``exact`` whether the
    board confirmed it after it was still.
    """

    kind: str
    done: int
    exact: bool
    status: object = None
    fault: object = None
    resent: int = 0


def _posture_match(units, lo, hi, q):
    """First stream offset in [lo, hi) whose angles equal the posture ``q``, or None."""
    lo, hi = max(lo, 0), min(hi, len(units))
    if hi <= lo:
        return None
    hit = np.flatnonzero(np.all(units[lo:hi] == np.asarray(q), axis=1))
    return int(lo + hit[0]) if hit.size else None


def stream_samples(link, units, pen, base, *, on_done=None, should_stop=None,
                   line_lost=_LINE_LOST, rto=_RTO):
    """Stream samples to a board that has just answered ``H``; return an :class:`Outcome`.

    Parameters
    ----------
    link : Link
    units : ndarray of int, shape (N, 2)
        Joint angles in angle units.
    pen : ndarray of int, shape (N,)
    base : int
        Index of the first sample on the wire (identifies this stream).
    on_done : callable, optional
        Called with the last confirmed offset whenever it advances.
    should_stop : callable, optional
        Polled; when it returns True the board is asked for a controlled stop.

    References
    ----------
    .. [1] A. S. Tanenbaum and D. J. Wetherall, *Computer Networks*, 5th ed.,
       Pearson, 2011, section 3.4.2 (go-back-N sliding window).
    """
    units = np.asarray(units, dtype=np.int64)
    pen = np.asarray(pen, dtype=np.int64)
    n = len(units)
    last = base + n - 1
    done = -1
    resent = [0]

    def note(st):
        nonlocal done
        if st.done != P.NONE and base <= st.done <= last and st.done - base > done:
            done = st.done - base
            if on_done:
                on_done(done)

    def stopped(kind, st, fault=None):
        final = stop_board(link) if st is None or st.state in (1, 2) else st
        if final is not None:
            note(final)
        exact = final is not None and final.state in (3, 4) and final.done != P.NONE
        return Outcome(kind, done, exact, final, fault, resent[0])

    m, _ = _ask(link, lambda s: P.encode_begin(s, base),
                lambda m, s: isinstance(m, P.Status) and m.seq == s)
    if m is None:
        return Outcome("lost", -1, True)
    if m.state != 0 or m.next != base:
        return Outcome("lost", -1, True, m)
    st = m
    sent = base
    window = st.next + st.free
    board_next = st.next
    running = False
    go_seq = end_seq = None
    t_go = t_end = 0.0
    t_progress = time.monotonic()
    fault = None
    end_acked = False

    def send_more():
        nonlocal sent
        stop_at = min(window, last + 1)
        while sent < stop_at:
            k = min(P.MAX_PER_FRAME, stop_at - sent)
            j = sent - base
            link.send(P.encode_samples(link.next_seq(), sent, units[j:j + k], pen[j:j + k]))
            sent += k

    send_more()
    while True:
        now = time.monotonic()
        if should_stop is not None and should_stop():
            return stopped("interrupted", None)
        # go: once the buffer is full or holds the whole stream
        if not running and go_seq is None and (board_next >= min(window, last + 1)):
            go_seq = link.next_seq()
            link.send(P.encode_go(go_seq))
            t_go = now
        elif not running and go_seq is not None and now - t_go > rto:
            link.send(P.encode_go(go_seq))
            t_go = now
        if board_next == last + 1 and not end_acked and (end_seq is None or now - t_end > rto):
            if end_seq is None:
                end_seq = link.next_seq()
            link.send(P.encode_end(end_seq, last))
            t_end = now
        for msg in link.poll(0.005):
            if isinstance(msg, P.Fault):
                fault = msg
            elif isinstance(msg, P.Gap):
                if msg.next < base:
                    return Outcome("reset", done, False, None, resent=resent[0])
                if msg.next < sent:
                    resent[0] += sent - msg.next
                    sent = msg.next
            elif isinstance(msg, P.Status):
                if msg.next < base or (running and msg.state == 0):
                    j = _posture_match(units, done, sent - base, (msg.q1, msg.q2))
                    if j is not None and j > done:
                        done = j
                        if on_done:
                            on_done(done)
                    return Outcome("reset", done, j is not None, msg, resent=resent[0])
                if go_seq is not None and msg.seq == go_seq and msg.state in (1, 4):
                    running = True
                if end_seq is not None and msg.seq == end_seq:
                    end_acked = True
                note(msg)
                if msg.next > board_next:
                    t_progress = now
                board_next = msg.next
                window = msg.next + msg.free
                if msg.state == 4:
                    return Outcome("finished", done, True, msg, resent=resent[0])
                if msg.state == 3 or (msg.state == 2 and msg.fault):
                    # state 2 without a fault: braking after the last sample, then finished
                    if msg.fault:
                        return stopped("fault", msg if msg.state == 3 else None, fault)
                    return stopped("interrupted", msg)
        now = time.monotonic()
        if now - link.last_rx > line_lost:
            return stopped("lost", None)
        if sent > board_next and now - t_progress > rto:
            resent[0] += sent - board_next
            sent = board_next
            t_progress = now
            link.send(P.encode_query(link.next_seq()))
        elif sent == board_next and now - link.last_rx > rto and now - t_progress > rto:
            link.send(P.encode_query(link.next_seq()))
            t_progress = now
        send_more()
