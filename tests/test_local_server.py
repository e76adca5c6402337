"""The local server (build.py serve) on 127.0.0.1: what it refuses, and a bounded load.

Expected statuses follow RFC 9110 (400 for a malformed request, 403 for a refused one,
404 for a missing file); the load is the project's own goal (500 concurrent requests
for the largest runtime file, all answered).
"""

from __future__ import annotations

import socket
import threading
import time
from collections.abc import Iterator
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest

import build

CONCURRENT = 500
LOAD_BOUND_S = 240.0


class Running:
    def __init__(self, root: Path, timeout: float = build.SERVER_TIMEOUT_S) -> None:
        self.server = build.make_server(root, 0, quiet=True, timeout=timeout)
        self.port = self.server.server_address[1]
        self.thread = threading.Thread(target=self.server.serve_forever, daemon=True)
        self.thread.start()

    def stop(self) -> None:
        self.server.shutdown()
        self.server.server_close()


def request(port: int, target: str, host: str | None = None, timeout: float = 30.0) -> bytes:
    """Send one GET and return the whole answer (status line, headers and body)."""
    host = f"127.0.0.1:{port}" if host is None else host
    with socket.create_connection(("127.0.0.1", port), timeout=timeout) as conn:
        conn.sendall(f"GET {target} HTTP/1.0\r\nHost: {host}\r\n\r\n".encode("latin-1"))
        chunks = []
        while chunk := conn.recv(1 << 16):
            chunks.append(chunk)
    return b"".join(chunks)


def status(answer: bytes) -> int:
    return int(answer.split(b" ", 2)[1])


@pytest.fixture
def site(tmp_path: Path) -> Iterator[Running]:
    root = tmp_path / "dist"
    (root / "sub").mkdir(parents=True)
    (root / "index.html").write_text("<!doctype html><title>t</title>\n")
    (root / "sub" / "note.txt").write_text("inside\n")
    (tmp_path / "secret.txt").write_text("outside\n")
    (root / "out.txt").symlink_to(tmp_path / "secret.txt")
    (root / "outdir").symlink_to(tmp_path)
    running = Running(root, timeout=1.0)
    yield running
    running.stop()


def test_pages_and_charset(site: Running) -> None:
    answer = request(site.port, "/")
    assert status(answer) == 200
    assert b"content-type: text/html; charset=utf-8" in answer.lower()


def test_no_directory_listing(site: Running) -> None:
    answer = request(site.port, "/sub/")
    assert status(answer) == 404 and b"note.txt" not in answer


def test_no_symlink_out_of_the_root(site: Running) -> None:
    for target in ("/out.txt", "/outdir/secret.txt", "/outdir/"):
        answer = request(site.port, target)
        assert status(answer) == 404 and b"outside" not in answer, target


@pytest.mark.parametrize("target", ["/a%00b", "/sub/%00", "/\x00"])
def test_nul_in_the_path_is_a_bad_request(site: Running, target: str) -> None:
    assert status(request(site.port, target)) == 400


@pytest.mark.parametrize(("host", "expected"), [
    ("127.0.0.1:{port}", 200), ("localhost:{port}", 200), ("LOCALHOST:{port}", 200),
    ("evil.example:{port}", 403), ("127.0.0.1", 403), ("localhost:1", 403), ("", 403)])
def test_only_local_host_names(site: Running, host: str, expected: int) -> None:
    assert status(request(site.port, "/", host.format(port=site.port))) == expected


@pytest.mark.parametrize("sent", [b"", b"GET / HTTP/1.1\r\nHost: 127.0.0.1"])
def test_idle_and_half_sent_connections_time_out(site: Running, sent: bytes) -> None:
    with socket.create_connection(("127.0.0.1", site.port), timeout=10) as conn:
        conn.sendall(sent)
        began = time.monotonic()
        while conn.recv(4096):
            pass
        assert time.monotonic() - began < 8   # the server closed it (its time-out is 1 s)


def test_500_concurrent_requests_for_the_largest_runtime_file() -> None:
    runtime = build.PYODIDE
    sizes = {name: (runtime / name).stat().st_size for name in build.RUNTIME}
    largest = max(sizes, key=lambda name: sizes[name])
    running = Running(runtime)
    try:
        def fetch(_index: int) -> tuple[int, int]:
            with socket.create_connection(("127.0.0.1", running.port), timeout=60) as conn:
                conn.sendall(f"GET /{largest} HTTP/1.0\r\nHost: 127.0.0.1:{running.port}"
                             "\r\n\r\n".encode())
                buffer = bytearray(1 << 20)
                total, head = 0, b""
                while count := conn.recv_into(buffer):
                    if len(head) < 64:
                        head += bytes(buffer[:min(count, 64)])
                    total += count
            return status(head), total

        began = time.monotonic()
        with ThreadPoolExecutor(max_workers=CONCURRENT) as pool:
            results = list(pool.map(fetch, range(CONCURRENT)))
        spent = time.monotonic() - began
    finally:
        running.stop()
    assert [code for code, _ in results] == [200] * CONCURRENT
    assert all(total > sizes[largest] for _, total in results)   # headers + the whole file
    assert spent < LOAD_BOUND_S, spent
    print(f"\nserver: {CONCURRENT} concurrent requests for {largest} "
          f"({sizes[largest]:,} bytes) in {spent:.1f} s")


def test_listen_queue_is_deep() -> None:
    assert build.Server.request_queue_size >= CONCURRENT
