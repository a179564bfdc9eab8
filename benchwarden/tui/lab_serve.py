"""The lab screen on a web page (``benchwarden lab serve``), with Textual's own web server.

``textual-serve`` runs one command per browser connection and draws its screen with xterm.js;
the command here is ``lab open URL`` (the same read-only :class:`~benchwarden.tui.lab.LabApp`),
with the URL as given (it never holds a password: the caller refuses one) and the environment
inherited, so the password comes from PGPASSWORD, ~/.pgpass or a service file. The server has
no login of its own. A browser's websocket is accepted only from a page of this server (the
``Origin`` must name the host the request came to), so another web site open in the same
browser cannot read the lab through it, and on a loopback address a request must name a loopback
host unless a reverse proxy forwards ``X-Forwarded-Host`` (a site whose name was re-pointed at
127.0.0.1 gets nothing). The page asks nothing of any other host (the library's
page links a web font; that link is left out, the terminal falls back to a local monospace font). SIGINT and SIGTERM stop it: every open page's app is
told to quit and awaited (at most :data:`STOP_WAIT_S`).
"""

from __future__ import annotations

import asyncio
import ipaddress
import logging
import re
import shlex
import signal
import sys
from collections.abc import Callable
from pathlib import Path
from typing import Any
from urllib.parse import urlsplit

from aiohttp import web
from textual_serve.server import Server

__all__ = ["LabServer", "lab_open_command", "STOP_WAIT_S", "TITLE"]

#: The page's title.
TITLE = "benchwarden — lab"
#: How long a stop waits for the open pages' apps to quit [s].
STOP_WAIT_S = 10.0
_HOST = re.compile(r"[A-Za-z0-9.\-]+(:[0-9]{1,5})?|\[[0-9A-Fa-f:.]+\](:[0-9]{1,5})?")


def _loopback(host: str) -> bool:
    """Whether a host name or address is this machine's loopback.

    >>> [_loopback(h) for h in ("127.0.0.1", "localhost", "::1", "0.0.0.0", "lab.example")]
    [True, True, True, False, False]
    """
    try:
        return ipaddress.ip_address(host.strip("[]")).is_loopback
    except ValueError:
        return host.lower() == "localhost"


def lab_open_command(url: str) -> str:
    """The shell command run for each browser connection: this Python's ``benchwarden lab open URL``."""
    return shlex.join([sys.executable, "-m", "benchwarden", "lab", "open", url])


class LabServer(Server):
    """textual-serve's server, quiet, with a clean stop, the public address taken from a reverse
    proxy's ``X-Forwarded-Proto``/``X-Forwarded-Host`` and cross-site websockets refused."""

    def __init__(self, url: str, host: str, port: int, announce: Callable[[], None]) -> None:
        super().__init__(lab_open_command(url), host=host, port=port, title=TITLE)
        self._announce = announce
        self._handlers: set[asyncio.Task[Any]] = set()

    def initialize_logging(self) -> None:
        logging.basicConfig(level=logging.WARNING, format="benchwarden lab serve: %(message)s")

    async def _make_app(self) -> web.Application:
        import aiohttp_jinja2
        import jinja2

        app = await super()._make_app()
        page = (Path(self.templates_path) / "app_index.html").read_text(encoding="utf-8")
        page = re.sub(r"<link[^>]*//fonts\.googleapis\.com[^>]*>", "", page)
        aiohttp_jinja2.setup(app, loader=jinja2.DictLoader({"app_index.html": page}))
        return app

    async def on_startup(self, app: web.Application) -> None:
        """Nothing: the one line is printed once the port is listening."""

    async def on_shutdown(self, app: web.Application) -> None:
        """Close every open page: its handler stops its app (``quit``) and waits for it."""
        for task in list(self._handlers):
            task.cancel()
        if self._handlers:
            await asyncio.wait(list(self._handlers), timeout=STOP_WAIT_S)

    def _host_of(self, request: web.Request) -> str:
        host = request.headers.get("X-Forwarded-Host", request.host)
        return host if _HOST.fullmatch(host) else f"{self.host}:{self.port}"

    def _check_host(self, request: web.Request) -> None:
        """On a loopback address, a request must name a loopback host (or come through a proxy that
        says ``X-Forwarded-Host``): a web site whose name was re-pointed at 127.0.0.1 is refused."""
        if "X-Forwarded-Host" in request.headers or not _loopback(self.host):
            return
        if not _loopback(urlsplit("//" + request.host).hostname or ""):
            raise web.HTTPForbidden(text="this lab view answers only to a loopback host name")

    async def handle_index(self, request: web.Request) -> Any:
        self._check_host(request)
        proto = request.headers.get("X-Forwarded-Proto", request.scheme)
        self.public_url = f"{proto if proto in ('http', 'https') else 'http'}://{self._host_of(request)}"
        return await super().handle_index(request)  # no await before the page is built from it

    async def handle_websocket(self, request: web.Request) -> web.WebSocketResponse:
        self._check_host(request)
        origin = request.headers.get("Origin")
        if origin is not None and urlsplit(origin).netloc != self._host_of(request):
            raise web.HTTPForbidden(text="a page of another site may not open the lab view")
        task = asyncio.current_task()
        assert task is not None
        self._handlers.add(task)
        try:
            return await super().handle_websocket(request)
        finally:
            self._handlers.discard(task)

    def serve(self, debug: bool = False) -> None:
        """Listen until SIGINT or SIGTERM; a port that cannot be bound raises :class:`OSError`."""
        self.initialize_logging()
        loop = asyncio.new_event_loop()
        asyncio.set_event_loop(loop)
        for sig in (signal.SIGINT, signal.SIGTERM):
            loop.add_signal_handler(sig, self.request_exit)
        web.run_app(self._make_app(), host=self.host, port=self.port, handle_signals=False, loop=loop,
                    print=lambda *_: self._announce(), access_log=None, shutdown_timeout=STOP_WAIT_S)
