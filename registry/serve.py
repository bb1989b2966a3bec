"""Preview server: build the site, serve it on 127.0.0.1 and rebuild when a registry file changes.

A rebuild that fails (a data problem) leaves the last good site in place and reports the problems
through `log`; the next change tries again. When another build is writing the same site (it holds the
lock), the server keeps serving and tries again at each poll until it can build. The server only ever
binds to the loopback address; a request it cannot take for a file of the site (a NUL or other control
character, a path over `MAX_PATH_CHARS`, a `..` segment, a backslash, bytes that are not UTF-8) is
answered 400 Bad Request, and no request ever stops it or prints a traceback.
"""
from __future__ import annotations

import functools
import http.server
import sys
import threading
import urllib.parse
from pathlib import Path
from typing import Callable

from registry import pipeline
from registry.core.errors import DataError
from registry.output.safe_text import terminal_line, terminal_text
from registry.site import publish

MAX_PATH_CHARS = 2048
"""The longest request path (query included) taken for a file of the site."""

Snapshot = dict[str, tuple[int, int]]


def snapshot(data_dir: Path) -> Snapshot:
    """Size and modification time of every file under `data_dir`, by relative path."""
    found = {}
    for path in sorted(data_dir.rglob("*")):
        if path.is_file() and not any(part.startswith(".") for part in path.relative_to(data_dir).parts):
            stat = path.stat()
            found[path.relative_to(data_dir).as_posix()] = (stat.st_size, stat.st_mtime_ns)
    return found


def bad_request(raw_path: str) -> str | None:
    """Why a request path cannot name a file of the site (None when it can)."""
    if len(raw_path) > MAX_PATH_CHARS:
        return f"a path over {MAX_PATH_CHARS} characters"
    path = raw_path.split("?", 1)[0].split("#", 1)[0]
    if not path.startswith("/"):
        return "a path not starting with /"
    try:
        decoded = urllib.parse.unquote(path, errors="strict")
    except UnicodeDecodeError:
        return "a path that is not UTF-8"
    if any(ord(char) < 0x20 or 0x7f <= ord(char) <= 0x9f for char in decoded):
        return "a control character in the path"
    if "\\" in decoded or ".." in decoded.split("/"):
        return "a path leading out of the site"
    return None


class _Quiet(http.server.SimpleHTTPRequestHandler):
    """Serves the site's files; a bad request gets 400 and nothing else happens."""

    def log_message(self, format, *args):  # the terminal shows rebuilds, not every request
        pass

    def do_GET(self):
        if self._refused():
            return
        super().do_GET()

    def do_HEAD(self):
        if self._refused():
            return
        super().do_HEAD()

    def _refused(self) -> bool:
        reason = bad_request(self.path)
        if reason is not None:
            self.send_error(400, f"Bad request: {reason}")
        return reason is not None

    def translate_path(self, path: str) -> str:
        try:
            return super().translate_path(path)
        except ValueError:  # what bad_request did not foresee: a name no file has
            return str(Path(self.directory) / ".no such file")


class _Server(http.server.ThreadingHTTPServer):
    daemon_threads = True

    def handle_error(self, request, client_address):
        """A request that failed in a way not foreseen: one line on the terminal, the server goes on."""
        error = sys.exc_info()[1]
        print(terminal_line(f"serve: a request from {client_address[0]} failed: {type(error).__name__}: {error}"),
              file=sys.stderr, flush=True)


class LiveSite:
    """A built site behind a loopback HTTP server, rebuilt by `rebuild_if_changed`."""

    def __init__(self, data_dir: Path, out_dir: Path, port: int = 8000,
                 log: Callable[[str], None] | None = None):
        self.data_dir = Path(data_dir)
        self.out_dir = Path(out_dir).resolve()
        self.log = log or (lambda line: print(line, file=sys.stderr, flush=True))
        self.seen: Snapshot = {}
        self.builds = 0
        self.waiting = False
        """True while another build holds the site's lock: `rebuild_if_changed` tries again."""
        self.rebuild()
        handler = functools.partial(_Quiet, directory=str(self.out_dir))
        self.server = _Server(("127.0.0.1", port), handler)
        self.thread: threading.Thread | None = None

    @property
    def url(self) -> str:
        return f"http://127.0.0.1:{self.server.server_address[1]}/"

    def rebuild(self) -> bool:
        """Build once; True on success. A data problem is logged and the previous site kept; while another
        build holds the lock nothing is built and `waiting` says so (logged once)."""
        self.seen = snapshot(self.data_dir)
        try:
            if publish.held_by_another(self.out_dir):
                raise publish.SiteLocked(f"{self.out_dir}: another build is writing this site")
            pipeline.build(self.data_dir, self.out_dir)
        except publish.SiteLocked:
            if not self.waiting:
                self.log(terminal_text(f"another build is writing {self.out_dir}: waiting for it, then building"))
            self.waiting = True
            return False
        except DataError as error:
            self.waiting = False
            self.log(terminal_text(error.report()))
            self.log("site not rebuilt: the previous build stays in place")
            return False
        self.waiting = False
        self.builds += 1
        self.log(terminal_text(f"site built from {self.data_dir} into {self.out_dir}"))
        return True

    def rebuild_if_changed(self) -> bool:
        """Rebuild when any file under the data folder was added, removed or changed, or when a build was
        waiting for another to end; True if it rebuilt."""
        if not self.waiting and snapshot(self.data_dir) == self.seen:
            return False
        return self.rebuild()

    def start(self) -> None:
        self.thread = threading.Thread(target=self.server.serve_forever, daemon=True)
        self.thread.start()

    def close(self) -> None:
        self.server.shutdown()
        self.server.server_close()


def serve(data_dir: Path, out_dir: Path, port: int = 8000, poll_seconds: float = 1.0,
          stop: threading.Event | None = None, log: Callable[[str], None] | None = None) -> None:
    """Build, serve on 127.0.0.1:`port`, and rebuild on changes until `stop` is set or Ctrl-C."""
    site = LiveSite(data_dir, out_dir, port, log)
    site.start()
    site.log(f"serving {site.url} (Ctrl-C stops)")
    stop = stop or threading.Event()
    try:
        while not stop.wait(poll_seconds):
            site.rebuild_if_changed()
    except KeyboardInterrupt:
        pass
    finally:
        site.close()
