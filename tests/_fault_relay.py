"""A faulty serial line for tests: a pty pair relaying bytes to a board's port.

usage: python _fault_relay.py BOARD_PORT [--flip P] [--drop P] [--stall-after S]
                              [--stall-for S] [--seed N]

Prints the path of its own terminal (the host's end) as the first stdout
line, then forwards bytes both ways until SIGTERM. Each byte is dropped with
probability ``--drop`` and has one random bit flipped with probability
``--flip``; after ``--stall-after`` seconds of traffic it forwards nothing
for ``--stall-for`` seconds (bytes sent meanwhile are lost, as on a cut line).
"""

import argparse
import os
import pty
import random
import select
import signal
import sys
import termios
import time
import tty


def _raw(fd):
    tty.setraw(fd)
    attrs = termios.tcgetattr(fd)
    attrs[3] &= ~termios.ECHO
    termios.tcsetattr(fd, termios.TCSANOW, attrs)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("board")
    ap.add_argument("--flip", type=float, default=0.0)
    ap.add_argument("--drop", type=float, default=0.0)
    ap.add_argument("--stall-after", type=float, default=None)
    ap.add_argument("--stall-for", type=float, default=0.0)
    ap.add_argument("--seed", type=int, default=1)
    a = ap.parse_args()
    rng = random.Random(a.seed)
    master, slave = pty.openpty()
    _raw(slave)
    board = os.open(a.board, os.O_RDWR | os.O_NOCTTY)
    _raw(board)
    print(os.ttyname(slave), flush=True)
    signal.signal(signal.SIGTERM, lambda *_: sys.exit(0))
    t_first = None

    def mangle(data):
        nonlocal t_first
        now = time.monotonic()
        if t_first is None:
            t_first = now
        if a.stall_after is not None and \
                a.stall_after <= now - t_first < a.stall_after + a.stall_for:
            return b""
        out = bytearray()
        for b in data:
            if rng.random() < a.drop:
                continue
            if rng.random() < a.flip:
                b ^= 1 << rng.randrange(8)
            out.append(b)
        return bytes(out)

    while True:
        r, _, _ = select.select([master, board], [], [], 0.5)
        for fd in r:
            try:
                data = os.read(fd, 4096)
            except OSError:
                data = b""
            if not data:
                continue
            data = mangle(data)
            if data:
                try:
                    os.write(board if fd == master else master, data)
                except OSError:
                    pass


if __name__ == "__main__":
    main()
