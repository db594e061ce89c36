"""Running the web page on a local port."""

import ipaddress
import sys

__all__ = ["serve"]

_LOOPBACK_NAMES = ("localhost", "127.0.0.1", "::1", "[::1]")


def _is_loopback(host):
    if host in ("localhost",):
        return True
    try:
        return ipaddress.ip_address(host.strip("[]")).is_loopback
    except ValueError:
        return False


def _timed_protocol(header_timeout):
    """uvicorn's HTTP protocol, closing a connection whose first request headers
    are not complete within ``header_timeout`` seconds (idle and trickling
    sockets would otherwise count against the connection cap for ever)."""
    from uvicorn.protocols.http.auto import AutoHTTPProtocol

    class _HeadTimed(AutoHTTPProtocol):
        _head_timer = None

        def connection_made(self, transport):
            super().connection_made(transport)
            self._head_timer = self.loop.call_later(header_timeout, self._head_late)

        def _head_late(self):
            self._head_timer = None
            if getattr(self, "cycle", None) is None and not self.transport.is_closing():
                self.transport.close()

        def connection_lost(self, exc):
            if self._head_timer is not None:
                self._head_timer.cancel()
                self._head_timer = None
            super().connection_lost(exc)

    return _HeadTimed


def serve(host="127.0.0.1", port=8765, open_browser=False, allow_network=False, token=None,
          max_connections=32, header_timeout=10.0, **app_options):
    """Serve the web page until interrupted.

    Parameters
    ----------
    host : str
        Address to bind; the loopback address by default, so only this
        computer can reach the page.
    port : int
        TCP port (0 picks a free one).
    open_browser : bool
        Open the page in the default browser once it is up.
    allow_network : bool
        Must be True to bind to anything but a loopback address: the page
        then answers other computers, so it prints a warning and asks every
        visitor for an access token.
    token : str, optional
        The access token when on a network (a random one is made and printed
        when None).
    max_connections : int
        Connections served at once; more get 503 at once (uvicorn's
        ``limit_concurrency``), so idle sockets cannot pile up.
    header_timeout : float
        Seconds a new connection has to send its request headers; slower
        ones are closed.
    **app_options
        Passed to :func:`inkreach.web.create_app`.

    Notes
    -----
    Prints one line with the address when the server is listening. When bound
    to a loopback address, only requests naming a loopback host are answered
    (a guard against DNS rebinding).
    """
    import socket

    import uvicorn

    from .app import create_app

    from ..errors import InkreachError

    if _is_loopback(host):
        app_options.setdefault("allowed_hosts", list(_LOOPBACK_NAMES) + [host])
    else:
        if not allow_network:
            raise InkreachError(f"--host {host[:60]} would let other computers use this page; "
                                "add --allow-network to do so (the page then asks for an "
                                "access token), or leave --host out for this computer only")
        if token is None:
            import secrets
            token = secrets.token_urlsafe(18)
        print(f"inkreach: warning: the page is open to the network on {host}; anyone who "
              f"can reach it and has the access token can plan on this computer. Access "
              f"token: {token}", file=sys.stderr, flush=True)
    app = create_app(token=token, **app_options)
    family = socket.AF_INET6 if ":" in host else socket.AF_INET
    sock = socket.socket(family, socket.SOCK_STREAM)
    sock.setsockopt(socket.SOL_SOCKET, socket.SO_REUSEADDR, 1)
    sock.bind((host.strip("[]"), int(port)))
    sock.listen(128)  # listening before the address is printed: no refused first connect
    real_port = sock.getsockname()[1]
    shown = f"[{host.strip('[]')}]" if ":" in host else host
    url = f"http://{shown}:{real_port}/"
    config = uvicorn.Config(app, log_level="warning", access_log=False, lifespan="on",
                            limit_concurrency=max(2, int(max_connections)),
                            http=_timed_protocol(float(header_timeout)),
                            timeout_keep_alive=5, h11_max_incomplete_event_size=16_384)
    server = uvicorn.Server(config)
    print(f"inkreach web page at {url} (Ctrl+C to stop)", flush=True)
    if open_browser:
        import threading
        import webbrowser
        threading.Timer(0.8, webbrowser.open, args=(url,)).start()
    try:
        server.run(sockets=[sock])
    except KeyboardInterrupt:  # pragma: no cover - interactive stop
        pass
    finally:
        app.state.shutdown()
        sock.close()
        sys.stdout.flush()
