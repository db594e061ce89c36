"""The web page as a real local server: it binds to the loopback address only."""

import os
import socket
import subprocess
import sys

import httpx
import pytest

from test_web_api import JOINTS_HEADER, _picture, _png

def start_server(**options):
    """Start ``inkreach.web.serve(**options)`` in a child process on a free loopback port.

    Returns (proc, url).
    """
    kw = "".join(f", {k}={v!r}" for k, v in options.items())
    launch = f'from inkreach.web import serve; serve(host="127.0.0.1", port=0{kw})'
    env = {**os.environ, "PYTHONUNBUFFERED": "1"}
    proc = subprocess.Popen([sys.executable, "-c", launch], stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True, env=env)
    line = proc.stdout.readline()
    if "http://" not in line:
        proc.kill()
        err = proc.stderr.read()
        raise RuntimeError(f"server did not start: {line!r} {err[-2000:]}")
    url = line.split()[line.split().index("at") + 1]
    return proc, url


def stop_server(proc):
    proc.terminate()
    try:
        proc.wait(10)
    except subprocess.TimeoutExpired:
        proc.kill()
        proc.wait(5)


@pytest.fixture(scope="module")
def server():
    proc, url = start_server()
    yield url
    stop_server(proc)


def _listening_addresses(port):
    """Local addresses listening on ``port``, from the Linux kernel's socket table."""
    found = []
    for table in ("/proc/net/tcp", "/proc/net/tcp6"):
        if not os.path.exists(table):
            continue
        with open(table) as fh:
            next(fh)
            for row in fh:
                cols = row.split()
                addr, p = cols[1].rsplit(":", 1)
                if int(p, 16) == port and cols[3] == "0A":  # 0A = LISTEN
                    found.append(addr)
    return found


def _outward_address():
    """This machine's address on its default route (no packet is sent), or None."""
    s = socket.socket(socket.AF_INET, socket.SOCK_DGRAM)
    try:
        s.connect(("192.0.2.1", 9))  # TEST-NET-1 (RFC 5737): never routed anywhere real
        ip = s.getsockname()[0]
    except OSError:
        return None
    finally:
        s.close()
    return None if ip.startswith("127.") or ip == "0.0.0.0" else ip


def test_server_prints_its_loopback_url_and_plans(server):
    assert server.startswith("http://127.0.0.1:")
    with httpx.Client(base_url=server, timeout=120) as c:
        assert c.get("/").status_code == 200
        r = c.post("/api/plans", data={"style": "centerline"},
                   files={"image": ("circle.png", _png(_picture()), "image/png")})
        assert r.status_code == 200, r.text
        joints = c.get(r.json()["files"]["joints.csv"])
        assert joints.text.splitlines()[0] == JOINTS_HEADER


def test_server_binds_to_loopback_only(server):
    port = int(server.rstrip("/").rsplit(":", 1)[1])
    addrs = _listening_addresses(port)
    if addrs:
        assert addrs == ["0100007F"], addrs  # 127.0.0.1, little-endian hex
    ip = _outward_address()
    if ip is not None:
        with pytest.raises(OSError):
            socket.create_connection((ip, port), timeout=3).close()
    if not addrs and ip is None:
        pytest.skip("cannot list listening sockets nor find a non-loopback address here")


def test_server_refuses_a_foreign_host_name(server):
    # a page on another site that resolves its name to 127.0.0.1 must not be answered
    r = httpx.get(server + "api/arms", headers={"Host": "evil.example"})
    assert r.status_code == 400
    assert httpx.get(server + "api/arms").status_code == 200
