"""Preview server: build the site, serve it on 127.0.0.1 and rebuild when a registry file changes.

A rebuild that fails (a data problem) leaves the last good site in place and reports the problems
through `log`; the next change tries again. The server only ever binds to the loopback address.
"""
from __future__ import annotations

import functools
import http.server
import sys
import threading
from pathlib import Path
from typing import Callable

from registry import pipeline
from registry.core.errors import DataError

Snapshot = dict[str, tuple[int, int]]


def snapshot(data_dir: Path) -> Snapshot:
    """Size and modification time of every file under `data_dir`, by relative path."""
    found = {}
    for path in sorted(data_dir.rglob("*")):
        if path.is_file() and not any(part.startswith(".") for part in path.relative_to(data_dir).parts):
            stat = path.stat()
            found[path.relative_to(data_dir).as_posix()] = (stat.st_size, stat.st_mtime_ns)
    return found


class _Quiet(http.server.SimpleHTTPRequestHandler):
    def log_message(self, format, *args):  # the terminal shows rebuilds, not every request
        pass


class LiveSite:
    """A built site behind a loopback HTTP server, rebuilt by `rebuild_if_changed`."""

    def __init__(self, data_dir: Path, out_dir: Path, port: int = 8000,
                 log: Callable[[str], None] | None = None):
        self.data_dir = Path(data_dir)
        self.out_dir = Path(out_dir).resolve()
        self.log = log or (lambda line: print(line, file=sys.stderr, flush=True))
        self.seen: Snapshot = {}
        self.builds = 0
        self.rebuild()
        handler = functools.partial(_Quiet, directory=str(self.out_dir))
        self.server = http.server.ThreadingHTTPServer(("127.0.0.1", port), handler)
        self.thread: threading.Thread | None = None

    @property
    def url(self) -> str:
        return f"http://127.0.0.1:{self.server.server_address[1]}/"

    def rebuild(self) -> bool:
        """Build once; True on success. A data problem is logged and the previous site kept."""
        self.seen = snapshot(self.data_dir)
        try:
            pipeline.build(self.data_dir, self.out_dir)
        except DataError as error:
            self.log(error.report())
            self.log("site not rebuilt: the previous build stays in place")
            return False
        self.builds += 1
        self.log(f"site built from {self.data_dir} into {self.out_dir}")
        return True

    def rebuild_if_changed(self) -> bool:
        """Rebuild when any file under the data folder was added, removed or changed; True if it rebuilt."""
        if snapshot(self.data_dir) == self.seen:
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
