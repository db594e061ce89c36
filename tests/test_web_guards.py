"""Only the page's own user can drive it; stalled and abandoned requests cost little.

The network tests talk only to 127.0.0.1, to a real ``inkreach.web.serve``
(uvicorn) in a child process, with a bounded number of sockets and seconds.
"""

import errno
import os
import socket
import subprocess
import sys
import time

import httpx
import pytest
from fastapi.testclient import TestClient

from inkreach.errors import InkreachError
from inkreach.web import create_app
from test_web_api import _picture, _png, fake_plan
from test_web_server import start_server, stop_server


@pytest.fixture(scope="module")
def png():
    return _png(_picture())


def _post(client, png, headers=None, **fields):
    return client.post("/api/plans", files={"image": ("p.png", png, "image/png")},
                       data={"style": "outline", **fields}, headers=headers or {})


# ---- origin and token (in process) ----------------------------------------------

def test_a_post_from_another_web_site_is_refused(png):
    app = create_app(planner=fake_plan)
    with TestClient(app) as c:
        r = _post(c, png, headers={"Origin": "http://evil.example"})
        assert r.status_code == 403 and "itself" in r.json()["error"]
        r = _post(c, png, headers={"Sec-Fetch-Site": "cross-site"})
        assert r.status_code == 403
        # the page itself, and scripts that send no Origin, are served
        assert _post(c, png, headers={"Origin": "http://testserver"}).status_code == 200
        assert _post(c, png).status_code == 200


def test_with_a_token_every_api_call_needs_it(png):
    app = create_app(planner=fake_plan, token="open-sesame-42")
    with TestClient(app) as c:
        assert c.get("/").status_code == 200  # the page loads, then asks for the token
        r = c.get("/api/arms")
        assert r.status_code == 401 and "access token" in r.json()["error"]
        assert c.get("/api/arms", headers={"X-Access-Token": "wrong"}).status_code == 401
        assert c.get("/api/arms", headers={"X-Access-Token": "open-sesame-42"}).status_code \
            == 200
        c.cookies.set("inkreach_token", "open-sesame-42")
        assert _post(c, png).status_code == 200


def test_the_page_can_ask_for_no_signals_and_booleans_are_strict(png):
    from inkreach.web import parse_options
    assert parse_options([("signals", "none")]) == {"signals": "none"}
    with pytest.raises(InkreachError, match="budget"):
        parse_options([("budget", "10")])


def test_hostile_page_values_get_one_line_and_no_500(png):
    app = create_app()
    with TestClient(app) as c:
        for field, value, words in [("period", "1e308", "period"),
                                    ("rotations", "abc", "rotations"),
                                    ("tip_speed", "0.1", "rows"),
                                    ("joint_order", "abc", "true or false"),
                                    ("signals", "none", None)]:
            r = _post(c, png, fidelity="false", **{field: value})
            if words is None:
                assert r.status_code == 200, r.text
                assert not {"servo.csv", "stepper.csv"} & set(r.json()["files"])
                continue
            assert r.status_code == 400, (field, r.text)
            err = r.json()["error"]
            assert words in err and "internal" not in err and "load_image" not in err


def test_a_decompression_bomb_on_the_page_is_far_too_large():
    import struct
    import zlib

    def chunk(kind, data):
        return (struct.pack(">I", len(data)) + kind + data
                + struct.pack(">I", zlib.crc32(kind + data) & 0xFFFFFFFF))
    bomb = (b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", struct.pack(">IIBBBBB", 60000, 60000, 8, 0,
                                                            0, 0, 0))
            + chunk(b"IDAT", zlib.compress(b"\x00" * 64)) + chunk(b"IEND", b""))
    with TestClient(create_app(planner=fake_plan)) as c:
        r = _post(c, bomb)
        assert r.status_code == 413 and "far too large" in r.json()["error"]


# ---- binding ----------------------------------------------------------------------

def test_a_network_address_needs_an_explicit_flag():
    from inkreach.web import serve
    with pytest.raises(InkreachError, match="--allow-network"):
        serve(host="0.0.0.0", port=0)


def test_a_busy_port_is_one_line_on_the_command_line(tmp_path):
    s = socket.socket()
    s.bind(("127.0.0.1", 0))
    s.listen(1)
    port = s.getsockname()[1]
    try:
        r = subprocess.run([sys.executable, "-m", "inkreach", "serve", "--port", str(port)],
                           capture_output=True, text=True, timeout=60)
    finally:
        s.close()
    assert r.returncode == 2 and "already in use" in r.stderr
    assert len(r.stderr.strip().splitlines()) == 1 and "Traceback" not in r.stderr


def test_environment_messages_are_one_line_each():
    from inkreach.cli.messages import environment_message
    for code, words in [(errno.ENOSPC, "disk is full"), (errno.EFBIG, "size limit"),
                        (errno.EACCES, "permission"), (errno.EADDRINUSE, "in use")]:
        msg = environment_message(OSError(code, os.strerror(code)))
        assert words in msg and "\n" not in msg


# ---- a real server ----------------------------------------------------------------


def _rss_mb(pid):
    with open(f"/proc/{pid}/status") as fh:
        for row in fh:
            if row.startswith("VmRSS:"):
                return int(row.split()[1]) / 1024
    return 0.0


def _stalled_upload(port, declared, send):
    s = socket.create_connection(("127.0.0.1", port), timeout=5)
    head = (f"POST /api/plans HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\n"
            "Content-Type: multipart/form-data; boundary=XyZ\r\n"
            f"Content-Length: {declared}\r\n\r\n").encode()
    s.sendall(head)
    s.settimeout(0.2)
    chunk = b"\x00" * 1_000_000
    sent = 0
    try:
        while sent < send:
            s.sendall(chunk)
            sent += len(chunk)
    except (socket.timeout, OSError):
        pass  # the server stopped reading: the rest waits in the kernel
    return s


@pytest.mark.skipif(not os.path.exists("/proc/self/status"), reason="needs Linux /proc")
def test_stalled_uploads_are_cut_off_and_hold_little_memory():
    proc, url = start_server(body_timeout=3.0, max_uploads=4)
    port = int(url.rsplit(":", 1)[1].strip("/"))
    socks = []
    try:
        httpx.get(url + "api/arms", timeout=30)
        before = _rss_mb(proc.pid)
        # 24 uploads that each send 8 MB of a declared 20 MB, then stop
        for _ in range(24):
            socks.append(_stalled_upload(port, 20_000_000, 8_000_000))
        time.sleep(0.5)
        held = _rss_mb(proc.pid) - before
        # our own bound: 4 bodies read at once x 8 MB, plus slack; without
        # the limit the 24 bodies would hold about 190 MB
        assert held < 100, held
        # every stalled upload gets an answer (408 or 503) within the time limit
        answered = 0
        deadline = time.monotonic() + 15
        for s in socks:
            s.settimeout(max(deadline - time.monotonic(), 0.1))
            try:
                data = s.recv(200)
            except (socket.timeout, OSError):
                data = b""
            answered += data.startswith(b"HTTP/1.1 408") or data.startswith(b"HTTP/1.1 503") \
                or data == b""
        assert answered == len(socks)
        for s in socks:
            s.close()
        socks = []
        time.sleep(0.5)
        # and the server still plans
        assert httpx.get(url + "api/arms", timeout=30).status_code == 200
        assert proc.poll() is None
    finally:
        for s in socks:
            s.close()
        stop_server(proc)


def test_an_abandoned_request_stops_its_plan(png):
    from PIL import Image
    import io
    import numpy as np
    rng = np.random.default_rng(3)
    big = Image.fromarray((rng.random((900, 1200)) * 255).astype(np.uint8))
    buf = io.BytesIO()
    big.save(buf, "PNG")
    proc, url = start_server(workers=1)
    port = int(url.rsplit(":", 1)[1].strip("/"))
    try:
        # a slow plan (stippling a noisy picture), abandoned after the upload
        body = httpx.Request("POST", url + "api/plans",
                             files={"image": ("n.png", buf.getvalue(), "image/png")},
                             data={"style": "stipple", "iterations": "80", "dots": "8000",
                                   "fidelity": "false"},
                             headers={"X-Progress-Id": "abandoned-123"})
        raw = body.read()
        s = socket.create_connection(("127.0.0.1", port), timeout=10)
        head = "".join(f"{k}: {v}\r\n" for k, v in body.headers.items())
        s.sendall(f"POST /api/plans HTTP/1.1\r\n{head}\r\n".encode() + raw)
        deadline = time.monotonic() + 60
        while time.monotonic() < deadline:
            st = httpx.get(url + "api/progress/abandoned-123", timeout=10).json()["stage"]
            if st == "trace":
                break
            time.sleep(0.1)
        s.close()
        # the one worker is freed at the next stage: a small plan then runs,
        # and the abandoned one never got to its motion
        r = httpx.post(url + "api/plans", files={"image": ("p.png", png, "image/png")},
                       data={"style": "outline", "fidelity": "false"}, timeout=120)
        assert r.status_code == 200
        st = httpx.get(url + "api/progress/abandoned-123", timeout=10).json()["stage"]
        assert st in ("trace", "merge", "place"), st
    finally:
        stop_server(proc)


def test_idle_and_trickling_connections_are_closed_and_the_page_still_answers():
    proc, url = start_server(max_connections=4, header_timeout=1.5)
    port = int(url.rsplit(":", 1)[1].strip("/"))
    socks = []
    try:
        for k in range(4):
            s = socket.create_connection(("127.0.0.1", port), timeout=10)
            if k % 2:
                s.sendall(b"GET /api/arms HTTP/1.1\r\nHost: 127.0.0")  # never finished
            socks.append(s)
        # with every connection slot held, the page cannot answer ...
        r = httpx.get(url + "api/arms", timeout=30)
        assert r.status_code == 503
        # ... until the slow ones are closed (our bound: 1.5 s given, 6 s waited)
        for s in socks:
            s.settimeout(6)
            assert s.recv(100) == b""
        assert httpx.get(url + "api/arms", timeout=30).status_code == 200
    finally:
        for s in socks:
            s.close()
        stop_server(proc)
