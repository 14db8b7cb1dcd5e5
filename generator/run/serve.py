"""Preview server: serve the built site on 127.0.0.1 and rebuild when sources change.

Watching is done by polling modification times of ``catalog/`` and ``site_templates/`` (no extra
dependency, works on every filesystem). The server resolves each request against ``site_dir``
afresh, so the build's atomic folder swap is picked up without a restart. A failed rebuild
keeps serving the previous site and prints why.
"""

from __future__ import annotations

import functools
import html
import re
import stat
import sys
import threading
from collections.abc import Callable, Iterable, Sequence
from http.server import SimpleHTTPRequestHandler, ThreadingHTTPServer
from pathlib import Path

from generator.errors import AlmanacError, printable
from generator.site.common import TEMPLATE_DIR

POLL_SECONDS = 1.0


def watched_roots() -> tuple[Path, ...]:
    return (Path.cwd() / "catalog", TEMPLATE_DIR)


def snapshot(roots: Iterable[Path]) -> tuple[tuple[str, int, int], ...]:
    """(path, mtime_ns, size) of every file under the roots, sorted: equal means unchanged."""
    state = []
    for root in roots:
        if not root.is_dir():
            continue
        for path in sorted(root.rglob("*")):
            try:  # lstat: a link is seen (and refused by the build), never followed
                info = path.lstat()
            except OSError:  # removed while we looked: the next poll sees it gone
                continue
            if not stat.S_ISDIR(info.st_mode):
                state.append((str(path), info.st_mtime_ns, info.st_size))
    return tuple(state)


class QuietHandler(SimpleHTTPRequestHandler):
    """Static file handler for the preview: no caching, errors only in the log."""

    def end_headers(self) -> None:
        self.send_header("Cache-Control", "no-store")
        super().end_headers()

    def log_message(self, format: str, *args: object) -> None:
        if args and str(args[1] if len(args) > 1 else "").startswith(("4", "5")):
            super().log_message(format, *args)


Diagnose = Callable[[str], "list[str] | None"]  # entry id -> its diagnostics, if it failed
_ENTRY_PATH = re.compile(r"^/entries/([a-z0-9]+(?:-[a-z0-9]+)*)(?:/(?:index\.html)?)?$")


class PreviewHandler(QuietHandler):
    """The preview's handler: the page of an entry that failed its check (and so was not
    published) is a page with the entry's diagnostics, not a bare 404."""

    diagnose: Diagnose | None = None

    def send_error(self, code: int, message: str | None = None,
                   explain: str | None = None) -> None:
        found = _ENTRY_PATH.match(self.path.split("?", 1)[0])
        lines = self.diagnose(found.group(1)) if (code == 404 and found and self.diagnose) \
            else None
        if lines is None:
            super().send_error(code, message, explain)
            return
        body = diagnostics_page(found.group(1), lines).encode("utf-8")  # type: ignore
        self.send_response(404, "Entry not published: it failed its check")
        self.send_header("Content-Type", "text/html; charset=utf-8")
        self.send_header("Content-Length", str(len(body)))
        self.end_headers()
        if self.command != "HEAD":
            self.wfile.write(body)


def diagnostics_page(entry_id: str, lines: list[str]) -> str:
    """A plain page (preview only, never written to the site); every text is escaped."""
    items = "\n".join(f"<li><pre>{html.escape(line)}</pre></li>" for line in lines)
    return (
        "<!doctype html><html lang=\"en\"><head><meta charset=\"utf-8\">"
        f"<title>{html.escape(entry_id)}: not published</title></head><body>"
        f"<h1>{html.escape(entry_id)} is not published</h1>"
        "<p>The entry failed its check, so the site leaves it out. Fix what is listed "
        "below; the preview rebuilds when the file is saved.</p>"
        f"<ul>{items}</ul></body></html>\n"
    )


def make_server(site_dir: Path, host: str, port: int,
                diagnose: Diagnose | None = None) -> ThreadingHTTPServer:
    handler_class = type("BoundPreviewHandler", (PreviewHandler,),
                         {"diagnose": staticmethod(diagnose) if diagnose else None})
    handler = functools.partial(handler_class, directory=str(site_dir))
    return ThreadingHTTPServer((host, port), handler)


def rebuild_safely(rebuild: Callable[[], None]) -> bool:
    """Run one rebuild; report a failure instead of stopping the preview.

    Any exception is caught, not only the expected ones: the watcher must outlive a bug (a
    rebuild that raised TypeError once ended the watcher, and the preview went on serving the
    old site without a word). An unexpected one is reported as our bug, with its type."""
    try:
        rebuild()
    except (AlmanacError, OSError) as exc:
        print(f"serve: rebuild failed, still serving the previous site: {printable(str(exc))}",
              file=sys.stderr)
        return False
    except Exception as exc:
        print(f"serve: rebuild failed with an internal error, still serving the previous site "
              f"(please report it): {type(exc).__name__}: {printable(str(exc))[:500]}",
              file=sys.stderr)
        return False
    return True


def watch(
    rebuild: Callable[[], None],
    stop: threading.Event,
    roots: tuple[Path, ...],
    interval: float = POLL_SECONDS,
    initial: tuple[tuple[str, int, int], ...] | None = None,
) -> None:
    """Poll the roots until ``stop`` is set; rebuild after every change since ``initial``
    (taken by the caller before starting the thread, so no edit can slip in between)."""
    last = snapshot(roots) if initial is None else initial
    while not stop.wait(interval):
        current = snapshot(roots)
        if current != last:
            last = current
            print("serve: change detected, rebuilding", file=sys.stderr)
            rebuild_safely(rebuild)


def serve(
    site_dir: Path,
    rebuild: Callable[[], None],
    host: str = "127.0.0.1",
    port: int = 8000,
    watch_paths: Sequence[Path] | None = None,
    diagnose: Diagnose | None = None,
) -> None:
    """Serve ``site_dir`` and rebuild on change until interrupted.

    The caller builds first; if there is no site yet, one build runs here. ``watch_paths``
    defaults to ./catalog and the templates folder.
    """
    if not site_dir.is_dir():
        rebuild_safely(rebuild)
    roots = tuple(watch_paths) if watch_paths is not None else watched_roots()
    server = make_server(site_dir, host, port, diagnose)
    stop = threading.Event()
    # The rebuilds run on the main thread, where the per-entry limits (signals, resource
    # limits) can be set; the server answers requests from a thread of its own.
    server_thread = threading.Thread(target=server.serve_forever, daemon=True)
    server_thread.start()
    print(f"serve: previewing {site_dir} at http://{host}:{server.server_port}/ "
          "(Ctrl-C to stop)", file=sys.stderr)
    try:
        watch(rebuild, stop, roots, POLL_SECONDS, snapshot(roots))
    except KeyboardInterrupt:
        print("serve: stopped", file=sys.stderr)
    finally:
        stop.set()
        server.shutdown()
        server.server_close()
