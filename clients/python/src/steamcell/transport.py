"""Transports: JSON-RPC 2.0 over HTTP (keep-alive) and over a child's stdin/stdout.

Also finds the ``steamcell`` binary and starts ``steamcell serve`` on a free port. A transport
sends one request object and returns the decoded response object; it raises
:class:`steamcell.errors.TransportError` when the server cannot be reached.
"""

from __future__ import annotations

import atexit
import http.client
import itertools
import json
import os
import re
import shutil
import subprocess
import tempfile
import threading
import urllib.parse
import weakref
from pathlib import Path
from typing import Any, Dict, List, Optional

from .errors import TransportError

_LISTEN_RE = re.compile(r"listening on http://(\S+)")


def find_binary(binary: Optional[str] = None) -> str:
    """Path of the steamcell binary.

    Order: the ``binary`` argument, env ``STEAMCELL_BIN``, ``steamcell`` on PATH, then
    ``target/release/steamcell`` and ``target/debug/steamcell`` of the repository this package
    lives in (and of the current directory and its parents), if present.
    """
    if binary:
        if not Path(binary).exists():
            raise TransportError(f"steamcell binary not found at {binary}")
        return str(binary)
    env = os.environ.get("STEAMCELL_BIN")
    if env:
        if not Path(env).exists():
            raise TransportError(f"STEAMCELL_BIN={env} does not exist")
        return env
    on_path = shutil.which("steamcell")
    if on_path:
        return on_path
    roots: List[Path] = []
    here = Path(__file__).resolve()
    # clients/python/src/steamcell/transport.py -> the repository root is four levels up
    if len(here.parents) > 4:
        roots.append(here.parents[4])
    cwd = Path.cwd().resolve()
    roots.extend([cwd, *cwd.parents])
    for root in roots:
        found = [root / "target" / profile / "steamcell" for profile in ("release", "debug")]
        found = [c for c in found if c.is_file() and os.access(c, os.X_OK)]
        if found:  # the freshest build wins (a stale release build must not shadow debug)
            return str(max(found, key=lambda c: c.stat().st_mtime))
    raise TransportError(
        "steamcell binary not found: set STEAMCELL_BIN, put steamcell on PATH, or build it with "
        "`cargo build` in the repository"
    )


class HttpTransport:
    """JSON-RPC over HTTP POST with one persistent (keep-alive) connection."""

    def __init__(self, url: str, timeout: float = 600.0):
        parsed = urllib.parse.urlsplit(url if "://" in url else "http://" + url)
        if parsed.scheme != "http":
            raise TransportError(f"only http:// URLs are supported, got {url}")
        self.url = f"http://{parsed.netloc}"
        self.host = parsed.hostname or "127.0.0.1"
        self.port = parsed.port or 80
        self.path = parsed.path or "/"
        self.timeout = timeout
        self._conn: Optional[http.client.HTTPConnection] = None
        self._lock = threading.Lock()

    def _connection(self) -> http.client.HTTPConnection:
        if self._conn is None:
            self._conn = http.client.HTTPConnection(self.host, self.port, timeout=self.timeout)
        return self._conn

    def _post(self, body: bytes) -> bytes:
        conn = self._connection()
        conn.request("POST", self.path, body=body,
                     headers={"Content-Type": "application/json", "Connection": "keep-alive"})
        resp = conn.getresponse()
        data = resp.read()
        if resp.getheader("Connection", "").lower() == "close":
            self._drop()
        if resp.status != 200 and not data.strip().startswith(b"{"):
            raise TransportError(f"HTTP {resp.status} from {self.url}: {data[:200]!r}")
        return data

    def _drop(self) -> None:
        if self._conn is not None:
            try:
                self._conn.close()
            finally:
                self._conn = None

    def send(self, request: Dict[str, Any]) -> Dict[str, Any]:
        body = json.dumps(request, allow_nan=False).encode()
        with self._lock:
            try:
                data = self._post(body)
            except (http.client.RemoteDisconnected, http.client.CannotSendRequest,
                    ConnectionResetError, BrokenPipeError):
                # the kept-alive connection was closed by the server: one fresh try
                self._drop()
                try:
                    data = self._post(body)
                except OSError as e:
                    self._drop()
                    raise TransportError(f"cannot reach steamcell at {self.url}: {e}") from e
            except OSError as e:
                self._drop()
                raise TransportError(f"cannot reach steamcell at {self.url}: {e}") from e
        try:
            return json.loads(data)
        except ValueError as e:
            raise TransportError(f"not a JSON-RPC answer from {self.url}: {data[:200]!r}") from e

    def post_bytes(self, path: str, body: bytes, content_type: str) -> "tuple[int, str, bytes]":
        """A raw POST on the kept-alive connection: (status, content type, body bytes)."""
        with self._lock:
            for attempt in (0, 1):
                try:
                    conn = self._connection()
                    conn.request("POST", path, body=body,
                                 headers={"Content-Type": content_type,
                                          "Connection": "keep-alive"})
                    resp = conn.getresponse()
                    data = resp.read()
                    if resp.getheader("Connection", "").lower() == "close":
                        self._drop()
                    return resp.status, resp.getheader("Content-Type", ""), data
                except (http.client.RemoteDisconnected, http.client.CannotSendRequest,
                        ConnectionResetError, BrokenPipeError) as e:
                    self._drop()
                    if attempt:
                        raise TransportError(f"cannot reach steamcell at {self.url}: {e}") from e
                except OSError as e:
                    self._drop()
                    raise TransportError(f"cannot reach steamcell at {self.url}: {e}") from e
        raise TransportError("unreachable")

    def get(self, path: str) -> "tuple[int, str]":
        """A plain GET (for /health and /cell/...): (status, body text)."""
        with self._lock:
            try:
                conn = self._connection()
                conn.request("GET", path)
                resp = conn.getresponse()
                text = resp.read().decode("utf-8", "replace")
                return resp.status, text
            except OSError as e:
                self._drop()
                raise TransportError(f"cannot reach steamcell at {self.url}: {e}") from e

    def close(self) -> None:
        with self._lock:
            self._drop()


def _drain(stream) -> None:
    try:
        for _ in iter(stream.readline, b""):
            pass
    except (OSError, ValueError):
        pass


_children: "weakref.WeakSet[Any]" = weakref.WeakSet()


@atexit.register
def _stop_children() -> None:
    for child in list(_children):
        try:
            child.stop()
        except Exception:
            pass


class _Child:
    """A steamcell child process that is stopped on close() and at interpreter exit."""

    def __init__(self, args: List[str], stdin: bool):
        self._stderr = tempfile.TemporaryFile()
        try:
            self.proc = subprocess.Popen(
                args,
                stdin=subprocess.PIPE if stdin else subprocess.DEVNULL,
                stdout=subprocess.PIPE,
                stderr=self._stderr,
            )
        except OSError as e:
            raise TransportError(f"cannot start {args[0]}: {e}") from e
        _children.add(self)

    def stderr_text(self) -> str:
        try:
            self._stderr.seek(0)
            return self._stderr.read().decode("utf-8", "replace")[-2000:]
        except (OSError, ValueError):
            return ""

    def stop(self) -> None:
        proc = self.proc
        if proc.poll() is None:
            if proc.stdin:
                try:
                    proc.stdin.close()
                except OSError:
                    pass
            proc.terminate()
            try:
                proc.wait(timeout=5)
            except subprocess.TimeoutExpired:
                proc.kill()
                proc.wait(timeout=5)
        for f in (proc.stdout, proc.stdin):
            if f:
                try:
                    f.close()
                except OSError:
                    pass
        try:
            self._stderr.close()
        except OSError:
            pass


class SpawnedHttpTransport(HttpTransport):
    """Starts ``steamcell serve --listen 127.0.0.1:0`` and talks HTTP to it."""

    def __init__(self, binary: str, listen: str = "127.0.0.1:0", timeout: float = 600.0,
                 extra_args=()):
        self.binary = binary
        self.child = _Child([binary, "serve", "--listen", listen, *extra_args], stdin=False)
        line = self.child.proc.stdout.readline().decode("utf-8", "replace")
        m = _LISTEN_RE.search(line)
        if not m:
            self.child.proc.wait(timeout=5) if self.child.proc.poll() is not None else None
            err = self.child.stderr_text()
            self.child.stop()
            raise TransportError(
                f"{binary} serve did not report its address (first line {line!r}); stderr: {err}")
        self.banner = line.strip()
        threading.Thread(target=_drain, args=(self.child.proc.stdout,), daemon=True).start()
        super().__init__("http://" + m.group(1), timeout=timeout)

    def close(self) -> None:
        super().close()
        self.child.stop()


class StdioTransport:
    """Newline-delimited JSON-RPC on the stdin/stdout of ``steamcell stdio``."""

    def __init__(self, binary: str):
        self.binary = binary
        self.url = None
        self.banner = None
        self.child = _Child([binary, "stdio"], stdin=True)
        self._lock = threading.Lock()

    def send(self, request: Dict[str, Any]) -> Dict[str, Any]:
        line = json.dumps(request, allow_nan=False).encode() + b"\n"
        proc = self.child.proc
        with self._lock:
            try:
                proc.stdin.write(line)
                proc.stdin.flush()
                while True:
                    out = proc.stdout.readline()
                    if not out:
                        raise TransportError(
                            "steamcell stdio closed its output; stderr: " + self.child.stderr_text())
                    if not out.strip():
                        continue
                    resp = json.loads(out)
                    # skip notifications and answers to other ids
                    if isinstance(resp, dict) and resp.get("id") == request.get("id"):
                        return resp
            except (OSError, ValueError) as e:
                raise TransportError(f"steamcell stdio failed: {e}") from e

    def close(self) -> None:
        self.child.stop()


_ids = itertools.count(1)


def next_id() -> int:
    return next(_ids)
