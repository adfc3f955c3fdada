"""``reportgen preview``: a local web server showing a job's package as HTML, rebuilt on
every save of the job file or of a file it names, and pushed to the open page.

aiohttp serves the page and a WebSocket that says "rebuilt"; watchfiles reports saves.
The build runs in a worker thread (computation and HTML only, no layout); a save that
does not build leaves the last good page up under a banner with the command line's
message. Nothing is written but drawings and verification rows in a temporary folder
that goes with the server; only the page, its drawings and files under the job's (or
its theme's) folder are served.
"""

from __future__ import annotations

import asyncio
import contextlib
import datetime as _dt
import os
import signal
import socket
import sys
import tempfile
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path
from typing import Any

from reportgen.errors import JobError, Problem, ReportgenError, error_text

__all__ = ["preview_command"]

LOOPBACK = ("127.0.0.1", "localhost", "::1")
#: The largest job-folder file the page may ask for (a theme's image, a logo).
SERVE_LIMIT = 16 * 1024 * 1024

CSS = """
html { background: #e9e7e2; }
body.rg-preview { margin: 0; padding: 1.5rem 23rem 3rem 1.5rem; }
.rg-doc { max-width: 210mm; margin: 0 auto; }
.rg-doc > section, .rg-doc > div, .rg-doc > header, .rg-doc > footer {
  background: #fff; box-shadow: 0 1px 4px rgba(0,0,0,.25); padding: 18mm 16mm;
  margin: 0 0 1.5rem 0; }
.rg-panel { position: fixed; top: 0; right: 0; bottom: 0; width: 21rem; overflow-y: auto;
  background: #fbfaf7; border-left: 1px solid #bbb; padding: .8rem 1rem;
  font: 13px/1.35 sans-serif; z-index: 10; }
.rg-total { font-weight: bold; font-size: 15px; margin: .2rem 0 .8rem; }
.rg-total.rg-fail { color: #9b1c1c; } .rg-total.rg-pass { color: #1d5e2c; }
.rg-checks { list-style: none; margin: 0; padding: 0; }
.rg-check a { display: block; padding: .35rem .45rem; margin-bottom: .3rem; color: inherit;
  text-decoration: none; border-left: 5px solid #888; background: #fff; }
.rg-check.rg-fail a { border-left-color: #b91c1c; background: #fdeeee; }
.rg-check.rg-pass a { border-left-color: #2f7d3e; }
.rg-status { font-weight: bold; margin-right: .3rem; }
.rg-title { color: #555; } .rg-desc, .rg-value { display: block; }
.rg-value { font-variant-numeric: tabular-nums; color: #333; }
.rg-when { color: #666; font-size: 11px; margin-top: 1rem; }
.rg-banner { position: sticky; top: 0; z-index: 20; margin: 0 0 1rem 0; padding: .6rem 1rem;
  background: #fff3c4; border: 2px solid #b45309; font: 14px/1.4 sans-serif; }
.rg-banner pre { white-space: pre-wrap; margin: .3rem 0 0; font-size: 13px; }
"""

#: Told "rebuilt", fetch the page again and put its body in place of ours, keeping the
#: scroll position; a lost connection is retried (the server may be restarting).
SCRIPT = """
(function () {
  var generation = document.body.dataset.generation;
  function swap(text) {
    var next = new DOMParser().parseFromString(text, "text/html");
    var y = window.scrollY;
    document.head.querySelectorAll("style").forEach(function (s) { s.remove(); });
    next.head.querySelectorAll("style").forEach(function (s) {
      document.head.appendChild(s); });
    document.body.innerHTML = next.body.innerHTML;
    document.body.dataset.generation = next.body.dataset.generation;
    generation = next.body.dataset.generation;
    window.scrollTo(0, y);
  }
  function connect(delay) {
    var ws = new WebSocket((location.protocol === "https:" ? "wss://" : "ws://")
                           + location.host + "/updates");
    ws.onmessage = function (event) {
      if (event.data !== generation) {
        fetch("/", {cache: "no-store"}).then(function (r) { return r.text(); }).then(swap);
      }
    };
    ws.onopen = function () { delay = 250; };
    ws.onclose = function () { setTimeout(function () { connect(Math.min(delay * 2, 5000)); },
                                          delay); };
  }
  connect(250);
})();
"""


class PreviewState:
    """The last good build, the message of the last failed one, and who is watching."""

    def __init__(self, job_path: Path, plugins: Any, work_dir: Path):
        self.job_path = job_path
        self.plugins = plugins
        self.work_dir = work_dir
        self.good: Any = None  # Preview
        self.built_at = ""
        self.error: str | None = None
        self.generation = 0
        self.sockets: set[Any] = set()
        self.files: set[Path] = {job_path}
        self.folders: set[Path] = set()
        self.lock = asyncio.Lock()
        self.drawer = ThreadPoolExecutor(max_workers=1, thread_name_prefix="preview-draw")

    async def rebuild(self) -> None:
        from reportgen.pipeline.preview import make_preview, named_files

        async with self.lock:
            try:
                good = await asyncio.to_thread(make_preview, self.job_path, self.plugins,
                                               self.work_dir)
            except ReportgenError as exc:
                self.error = error_text(exc)
                _say(f"not rebuilt: {self.error}")
            except Exception as exc:  # noqa: BLE001 - a bug shows in the banner, never stops the server
                self.error = error_text(exc)
                _say(f"not rebuilt: {self.error}")
            else:
                self.good, self.error = good, None
                self.built_at = _dt.datetime.now().strftime("%H:%M:%S")
                self.files, self.folders = named_files(good.job)
                self.files.add(self.job_path)
                failed = len(good.doc.failed)
                _say(f"rebuilt {self.built_at}: {failed} of {len(good.doc.design_checks)}"
                     " design checks fail" if failed else f"rebuilt {self.built_at}")
            self.generation += 1
        for ws in list(self.sockets):
            with contextlib.suppress(Exception):
                await ws.send_str(str(self.generation))

    def page(self) -> str:
        from html import escape

        from reportgen.render.html import render_preview_frame

        doc = self.good.doc if self.good is not None else None
        frame = render_preview_frame(doc, self.error, self.built_at)
        head, body = _split(self.good.html) if self.good is not None else (
            "<!DOCTYPE html><html><head><meta charset='utf-8'>"
            f"<title>{escape(self.job_path.name)}</title>", "")
        return (f"{head}<style>{CSS}</style></head>"
                f'<body class="rg-preview" data-generation="{self.generation}">{frame}'
                f'<main class="rg-doc">{body}</main><script>{SCRIPT}</script></body></html>')

    def watched(self, change: Any, path: str) -> bool:
        p = Path(path).resolve()
        return p in self.files or any(p.is_relative_to(f) for f in self.folders)

    def roots(self) -> set[Path]:
        return {f.parent for f in self.files} | self.folders


def _split(html: str) -> tuple[str, str]:
    """(everything before ``</head>``, the body's inside) of the package's HTML."""
    head_end = html.find("</head>")
    body_start = html.find(">", html.find("<body")) + 1
    body_end = html.rfind("</body>")
    return html[:head_end], html[body_start:body_end]


def _say(text: str) -> None:
    print(f"preview: {text}", file=sys.stderr, flush=True)


def make_app(state: PreviewState, allowed_hosts: set[str] | None) -> Any:
    from aiohttp import WSMsgType, web

    async def page(request: web.Request) -> web.Response:
        return web.Response(text=state.page(), content_type="text/html",
                            headers={"Cache-Control": "no-store"})

    async def asset(request: web.Request) -> web.Response:
        from reportgen.pipeline.preview import draw_later

        key = request.match_info["key"]
        good = state.good
        if good is None or (key not in good.payloads and key not in good.later):
            raise web.HTTPNotFound()
        # one drawing at a time, off the event loop (matplotlib is not thread-safe)
        payload = good.payloads.get(key) or await asyncio.get_running_loop(
        ).run_in_executor(state.drawer, draw_later, good, key, state.work_dir)
        return web.Response(body=payload, content_type=good.mimes.get(key, "image/svg+xml"),
                            headers={"Cache-Control": "max-age=3600, immutable"})

    async def updates(request: web.Request) -> web.WebSocketResponse:
        ws = web.WebSocketResponse(heartbeat=20)
        await ws.prepare(request)
        state.sockets.add(ws)
        try:
            await ws.send_str(str(state.generation))
            async for msg in ws:
                if msg.type == WSMsgType.ERROR:
                    break
        finally:
            state.sockets.discard(ws)
        return ws

    async def job_file(request: web.Request) -> web.Response:
        """A file the page asks for by a relative URL: only under the job's folder (or
        its theme's), by the core's one safe-path rule."""
        import mimetypes

        from reportgen.job.paths import TooLarge, UnsafePath, read_inside

        rel = request.match_info["path"]
        roots = [state.job_path.parent]
        if state.good is not None and state.good.job.template_dir is not None:
            roots.insert(0, state.good.job.template_dir)
        for root in roots:
            try:
                data = read_inside(root, rel, SERVE_LIMIT)
            except (UnsafePath, TooLarge, OSError):
                continue
            mime = mimetypes.guess_type(rel)[0] or "application/octet-stream"
            return web.Response(body=data, content_type=mime)
        raise web.HTTPNotFound()

    @web.middleware
    async def same_host(request: web.Request, handler: Any) -> Any:
        # a page elsewhere must not read the preview through a name that points here
        if allowed_hosts is not None and request.host not in allowed_hosts:
            raise web.HTTPForbidden(text="preview: unexpected Host header")
        return await handler(request)

    app = web.Application(middlewares=[same_host])
    app.router.add_get("/", page)
    app.router.add_get("/updates", updates)
    app.router.add_get("/asset/{key:[0-9a-f]{64}}", asset)
    app.router.add_get("/{path:.+}", job_file)
    return app


async def watch(state: PreviewState, stop: asyncio.Event) -> None:
    """Rebuild on every save of a watched file; the watched set follows the last good
    build (a new data file named by the job is watched from the build that names it)."""
    from watchfiles import awatch

    while not stop.is_set():
        roots = state.roots()
        existing = [str(r) for r in sorted(roots) if r.is_dir()]
        async for _ in awatch(*existing, watch_filter=state.watched, recursive=False,
                              debounce=400, step=30, stop_event=stop):
            await state.rebuild()
            if state.roots() != roots:
                break


def _listen(host: str, port: int) -> socket.socket:
    family = socket.AF_INET6 if ":" in host else socket.AF_INET
    sock = socket.socket(family, socket.SOCK_STREAM)
    sock.setsockopt(socket.SOL_SOCKET, socket.SO_REUSEADDR, 1)
    try:
        sock.bind((host, port))
    except OSError as exc:
        sock.close()
        raise JobError(Problem("--port" if port else "--host",
                               f"cannot listen on {host}:{port}: {exc.strerror or exc}"),
                       ) from None
    sock.listen(64)
    sock.setblocking(False)
    return sock


def preview_command(job: Path, host: str | None, port: int | None) -> int:
    job = Path(job)
    if not job.is_file():
        raise JobError(Problem(str(job), "no such job file"))
    bind = host or "127.0.0.1"
    if port is not None and not 0 <= port <= 65535:
        raise JobError(Problem("--port", f"{port} is not a port number (0 to 65535)"))
    with tempfile.TemporaryDirectory(prefix="reportgen-preview-") as tmp:
        # every cache this process would write (pint's definitions too) goes with it
        os.environ["REPORTGEN_CACHE_DIR"] = tmp
        from reportgen.calc.plugin_set import load_plugins

        plugins = load_plugins()
        sock = _listen(bind, port or 0)
        bound = sock.getsockname()[1]
        shown = f"[{bind}]" if ":" in bind else bind
        allowed = ({f"{h}:{bound}" for h in ("127.0.0.1", "localhost", "[::1]")}
                   if bind in LOOPBACK else None)
        if bind not in LOOPBACK:
            _say(f"warning: serving on {bind}: anyone who can reach this machine on port"
                 f" {bound} can read this package")
        state = PreviewState(job.resolve(), plugins, Path(tmp))
        try:
            asyncio.run(_serve(state, sock, allowed, f"http://{shown}:{bound}/"))
        except (KeyboardInterrupt, asyncio.CancelledError):
            pass
        _say("stopped; nothing was written")
    return 0


async def _serve(state: PreviewState, sock: socket.socket, allowed: set[str] | None,
                 url: str) -> None:
    from aiohttp import web

    stop = asyncio.Event()
    main = asyncio.current_task()
    if main is not None:  # SIGTERM stops the server as Ctrl-C does
        asyncio.get_running_loop().add_signal_handler(signal.SIGTERM, main.cancel)
    runner = web.AppRunner(make_app(state, allowed), handle_signals=False)
    await runner.setup()
    site = web.SockSite(runner, sock)
    await site.start()
    print(f"preview of {state.job_path.name} at {url}  (Ctrl-C to stop)", flush=True)
    watcher = None
    try:
        await state.rebuild()
        watcher = asyncio.create_task(watch(state, stop))
        await asyncio.Event().wait()  # until Ctrl-C or SIGTERM cancels the main task
    finally:
        stop.set()
        if watcher is not None:
            watcher.cancel()
            with contextlib.suppress(asyncio.CancelledError, Exception):
                await watcher
        for ws in list(state.sockets):
            with contextlib.suppress(Exception):
                await ws.close()
        await runner.cleanup()
        state.drawer.shutdown(wait=True, cancel_futures=True)
