"""Transports: JSON-RPC 2.0 over HTTP or HTTPS (keep-alive) and over a child's stdin/stdout.

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
import ssl
import subprocess
import tempfile
import threading
import urllib.parse
import urllib.request
import weakref
from pathlib import Path
from typing import Any, Dict, List, Optional

from .errors import TransportError

_LISTEN_RE = re.compile(r"listening on http://(\S+)")

#: Environment variable naming a PEM file of CA certificates to trust for https:// servers.
ENV_CA_FILE = "STEAMCELL_CA_FILE"


def http_failure(status: int, where: str, data: bytes) -> TransportError:
    """The error of a non-JSON answer: the status and the server's one-line reason as text."""
    text = data[:300].decode("utf-8", "replace").strip()
    hint = ""
    if status == 401:
        hint = " (give the token: steamcell.connect(url, token=...) or env STEAMCELL_TOKEN)"
    return TransportError(f"HTTP {status} from {where}: {text}{hint}")


def tls_context(ca_file: Optional[str] = None) -> ssl.SSLContext:
    """The TLS context of an https:// server: certificates are verified against ``ca_file``
    (PEM; default env ``STEAMCELL_CA_FILE``), else against the system's trust store, and the
    host name is checked."""
    ca_file = ca_file or os.environ.get(ENV_CA_FILE) or None
    if ca_file and not Path(ca_file).is_file():
        raise TransportError(f"the CA file {ca_file} does not exist")
    try:
        return ssl.create_default_context(cafile=ca_file)
    except (ssl.SSLError, OSError) as e:
        raise TransportError(f"the CA file {ca_file} cannot be used: {e}") from e


def _checkout_of_install() -> Optional[Path]:
    """The repository checkout this package was installed from, if pip recorded one.

    ``pip install ./clients/python`` (PEP 610) writes the source directory into the installed
    distribution's ``direct_url.json`` as a ``file://`` URL; the checkout is two levels above
    ``clients/python``. When the package is imported from the source tree itself (tests,
    ``PYTHONPATH=clients/python/src``) that tree's checkout is used.
    """
    here = Path(__file__).resolve()
    # clients/python/src/steamcell/transport.py -> the checkout is four levels up
    if len(here.parents) > 4 and here.parents[2].name == "python" and \
            here.parents[3].name == "clients":
        return here.parents[4]
    try:
        from importlib import metadata
        text = metadata.distribution("steamcell").read_text("direct_url.json")
    except Exception:
        return None
    if not text:
        return None
    try:
        url = json.loads(text).get("url", "")
    except ValueError:
        return None
    if not url.startswith("file://"):
        return None
    src = Path(urllib.request.url2pathname(urllib.parse.urlsplit(url).path))
    if src.name == "python" and src.parent.name == "clients":
        return src.parent.parent
    return None


def _built_in(root: Path) -> Optional[str]:
    """The freshest of ``root/target/release/steamcell`` and ``root/target/debug/steamcell``."""
    name = "steamcell.exe" if os.name == "nt" else "steamcell"
    found = [root / "target" / profile / name for profile in ("release", "debug")]
    found = [c for c in found if c.is_file() and os.access(c, os.X_OK)]
    if not found:
        return None
    # the freshest build wins (a stale release build must not shadow a new debug build)
    return str(max(found, key=lambda c: c.stat().st_mtime))


def binary_candidates() -> List[Path]:
    """The checkouts :func:`find_binary` looks in, in order: the current directory and each of
    its parents, then the checkout the package was installed from."""
    cwd = Path.cwd().resolve()
    roots = [cwd, *cwd.parents]
    src = _checkout_of_install()
    if src is not None and src not in roots:
        roots.append(src)
    return roots


def find_binary(binary: Optional[str] = None) -> str:
    """Path of the steamcell binary.

    Order (the first that exists wins):

    1. the ``binary`` argument;
    2. env ``STEAMCELL_BIN``;
    3. ``steamcell`` on ``PATH`` (e.g. after ``cargo install --path .``);
    4. a checkout with a build: the current directory and each of its parents, then the
       checkout the package was installed from (``pip install ./clients/python`` records it),
       each with ``target/release/steamcell`` or ``target/debug/steamcell`` (the fresher of the
       two when both exist).
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
    roots = binary_candidates()
    for root in roots:
        found = _built_in(root)
        if found:
            return found
    raise TransportError(
        "steamcell binary not found: set STEAMCELL_BIN, put steamcell on PATH, or build it with "
        "`cargo build --release` in the repository and run from inside the checkout (looked in "
        + ", ".join(dict.fromkeys(str(r / "target") for r in roots[:3] + roots[-1:])) + ")"
    )


class HttpTransport:
    """JSON-RPC over HTTP POST on a pool of kept-alive connections.

    Each request takes an idle connection from the pool (or opens one) and gives it back when
    its answer is read, so threads sharing one client run their calls side by side on separate
    connections; at most ``pool_size`` idle connections are kept. A kept-alive connection that
    the server closed in the meantime is replaced once, transparently.
    """

    def __init__(self, url: str, timeout: float = 600.0, pool_size: int = 32,
                 token: Optional[str] = None, ca_file: Optional[str] = None):
        parsed = urllib.parse.urlsplit(url if "://" in url else "http://" + url)
        if parsed.scheme not in ("http", "https"):
            raise TransportError(f"only http:// and https:// URLs are supported, got {url}")
        self.scheme = parsed.scheme
        self.url = f"{parsed.scheme}://{parsed.netloc}"
        self.host = parsed.hostname or "127.0.0.1"
        self.port = parsed.port or (443 if parsed.scheme == "https" else 80)
        #: The TLS context of an https:// server (``ca_file``, env STEAMCELL_CA_FILE, or the
        #: system's trust store); None for http://.
        self.ssl_context = tls_context(ca_file) if parsed.scheme == "https" else None
        self.path = parsed.path or "/"
        self.timeout = timeout
        self.pool_size = max(1, int(pool_size))
        #: Bearer token sent with every request (a team server's), default env STEAMCELL_TOKEN.
        self.token = token if token is not None else os.environ.get("STEAMCELL_TOKEN") or None
        self._idle: List[http.client.HTTPConnection] = []
        self._lock = threading.Lock()
        self._closed = False
        #: Connections opened so far (the pool grows with the threads that call at once).
        self.opened = 0

    def _acquire(self) -> http.client.HTTPConnection:
        with self._lock:
            if self._closed:
                raise TransportError(f"the connection to {self.url} is closed")
            if self._idle:
                return self._idle.pop()
            self.opened += 1
        if self.ssl_context is not None:
            return http.client.HTTPSConnection(self.host, self.port, timeout=self.timeout,
                                               context=self.ssl_context)
        return http.client.HTTPConnection(self.host, self.port, timeout=self.timeout)

    def _release(self, conn: http.client.HTTPConnection, keep: bool) -> None:
        if keep:
            with self._lock:
                if not self._closed and len(self._idle) < self.pool_size:
                    self._idle.append(conn)
                    return
        conn.close()

    def request(self, method: str, path: str, body: Optional[bytes] = None,
                headers: Optional[Dict[str, str]] = None) -> "tuple[int, str, bytes]":
        """One HTTP request on a pooled connection: (status, content type, body bytes)."""
        hdrs = dict(headers or {})
        hdrs.setdefault("Connection", "keep-alive")
        if self.token:
            hdrs["Authorization"] = f"Bearer {self.token}"
        while True:
            conn = self._acquire()
            reused = conn.sock is not None
            try:
                conn.request(method, path, body=body, headers=hdrs)
                resp = conn.getresponse()
                data = resp.read()
            except (http.client.RemoteDisconnected, http.client.CannotSendRequest,
                    http.client.BadStatusLine, ConnectionResetError, BrokenPipeError) as e:
                conn.close()
                if reused:  # the server closed a kept-alive connection: try a fresh one
                    continue
                raise TransportError(f"cannot reach steamcell at {self.url}: {e}") from e
            except OSError as e:
                conn.close()
                raise TransportError(f"cannot reach steamcell at {self.url}: {e}") from e
            keep = not resp.will_close and resp.getheader("Connection", "").lower() != "close"
            self._release(conn, keep)
            return resp.status, resp.getheader("Content-Type", "") or "", data

    def send(self, request: Dict[str, Any]) -> Dict[str, Any]:
        body = json.dumps(request, allow_nan=False).encode()
        status, _, data = self.request("POST", self.path, body,
                                       {"Content-Type": "application/json"})
        if status != 200 and not data.strip().startswith(b"{"):
            raise http_failure(status, self.url, data)
        try:
            return json.loads(data)
        except ValueError as e:
            raise TransportError(f"not a JSON-RPC answer from {self.url}: {data[:200]!r}") from e

    def post_bytes(self, path: str, body: bytes, content_type: str) -> "tuple[int, str, bytes]":
        """A raw POST on a pooled connection: (status, content type, body bytes)."""
        return self.request("POST", path, body, {"Content-Type": content_type})

    def get(self, path: str) -> "tuple[int, str]":
        """A plain GET (for /health and /cell/...): (status, body text)."""
        status, _, data = self.request("GET", path)
        return status, data.decode("utf-8", "replace")

    def close(self) -> None:
        with self._lock:
            self._closed = True
            idle, self._idle = self._idle, []
        for conn in idle:
            conn.close()


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
                 extra_args=(), token: Optional[str] = None):
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
        super().__init__("http://" + m.group(1), timeout=timeout, token=token)

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
