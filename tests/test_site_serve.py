"""The preview server: serves the built site on the loopback address and rebuilds on data changes."""
from __future__ import annotations

import shutil
import socket
import urllib.request

from registry import serve
from registry.site import publish


def fetch(url: str) -> str:
    with urllib.request.urlopen(url, timeout=30) as response:
        return response.read().decode("utf-8")


def test_serves_and_rebuilds_when_data_changes(tmp_path, demo_data, demo_fleet):
    data = tmp_path / "data"
    shutil.copytree(demo_data, data)
    lines: list[str] = []
    site = serve.LiveSite(data, tmp_path / "site", port=0, log=lines.append)
    site.start()
    try:
        assert site.url.startswith("http://127.0.0.1:")
        assert "Fleet overview" in fetch(site.url + "index.html")
        assert site.rebuild_if_changed() is False  # nothing changed, nothing rebuilt
        aircraft = next(iter(demo_fleet.aircraft.values()))
        path = data / "aircraft" / f"{aircraft.id}.yaml"
        text = path.read_text(encoding="utf-8")
        new_registration = "QX-ZZZ"
        path.write_text(text.replace(f"registration: {aircraft.registration}", f"registration: {new_registration}"),
                        encoding="utf-8")
        assert site.rebuild_if_changed() is True
        assert new_registration in fetch(site.url + f"aircraft/{aircraft.id}.html")
        # a broken file keeps the last good site and reports the problem
        path.write_text(text + "\nunknown_key_for_test: 1\n", encoding="utf-8")
        assert site.rebuild_if_changed() is False
        assert new_registration in fetch(site.url + f"aircraft/{aircraft.id}.html")
        assert any(f"{aircraft.id}.yaml" in line for line in lines)
        assert site.builds == 2
    finally:
        site.close()


def status_of(port: int, request_line: bytes) -> int:
    """The status code the server answers a raw request line with (sent as is, byte for byte)."""
    with socket.create_connection(("127.0.0.1", port), timeout=30) as connection:
        connection.sendall(request_line + b"\r\nHost: 127.0.0.1\r\n\r\n")
        reply = b""
        while b"\r\n" not in reply:
            chunk = connection.recv(4096)
            if not chunk:
                break
            reply += chunk
    return int(reply.split(b" ", 2)[1])


BAD_REQUESTS = [b"GET /%00 HTTP/1.1", b"GET /index.html%00.txt HTTP/1.1", b"GET /\x01 HTTP/1.1",
                b"GET /" + b"a" * 5000 + b" HTTP/1.1", b"GET /../etc/passwd HTTP/1.1",
                b"GET /%2e%2e/%2E%2E/etc/passwd HTTP/1.1", b"GET /a%5c..%5cb HTTP/1.1", b"GET /%ff%fe HTTP/1.1",
                b"HEAD /%00 HTTP/1.1", b"GET /%1b%5b2J HTTP/1.1"]
"""NUL (RFC 3986 percent-encoding of a byte no file name holds), control characters, an over-long path,
dot segments (RFC 3986 section 3.3) plain and encoded, a backslash, bytes that are not UTF-8."""


def test_bad_requests_get_400_and_the_server_waits_for_a_lock_held_by_another_build(tmp_path, demo_data, capfd):
    data = tmp_path / "data"
    shutil.copytree(demo_data, data)
    out = tmp_path / "site"
    lines: list[str] = []
    with publish.target_lock(out.resolve()):  # a manual build writing the same site
        site = serve.LiveSite(data, out, port=0, log=lines.append)
        site.start()
        try:
            assert site.waiting and site.builds == 0
            assert any("another build is writing" in line for line in lines)
            assert site.rebuild_if_changed() is False  # still held: still waiting, nothing built
            port = site.server.server_address[1]
            assert [status_of(port, line) for line in BAD_REQUESTS] == [400] * len(BAD_REQUESTS)
        except BaseException:
            site.close()
            raise
    try:
        assert site.rebuild_if_changed() is True  # the other build ended: this one builds
        assert not site.waiting and site.builds == 1
        assert "Fleet overview" in fetch(site.url + "index.html")
        assert [status_of(port, line) for line in BAD_REQUESTS] == [400] * len(BAD_REQUESTS)
        assert status_of(port, b"GET /index.html HTTP/1.1") == 200  # still serving
    finally:
        site.close()
    assert "Traceback" not in capfd.readouterr().err
