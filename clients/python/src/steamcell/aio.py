"""The asyncio flavour of the client: ``c = await steamcell.aio.connect()``.

    import asyncio, steamcell.aio

    async def main():
        async with steamcell.aio.connect() as c:          # starts the local binary
            states = await asyncio.gather(*(c.state(p=p, T="300 degC") for p in (1, 2, 5)))
            r = await c.turbine_expand(inlet={...}, outlet_p="4 barg", efficiency=0.72)

Every method of the synchronous :class:`steamcell.Client` that talks to the server is a
coroutine here, with the same arguments and results (``call``, ``call_raw``, ``state``,
``info``, ``balance``, every generated wrapper such as ``turbine_expand`` or
``c.turbine.expand``). JSON-RPC goes over asyncio streams (standard library only) on a pool of
kept-alive HTTP connections: concurrent calls run side by side on up to ``max_connections``
connections, later ones wait for a free connection. ``batch`` runs the synchronous packed
column path in a worker thread, so the event loop stays free while numbers are computed.
"""

from __future__ import annotations

import asyncio
import json
import os
import urllib.parse
from typing import Any, Dict, List, Optional, Sequence, Tuple

from . import errors, transport
from .client import (STATE_KEYS, WRAPPERS, Client, _jsonable, digest_mismatch,
                     expected_digest)
from .records import State, wrap


class _Conn:
    __slots__ = ("reader", "writer")

    def __init__(self, reader: asyncio.StreamReader, writer: asyncio.StreamWriter):
        self.reader, self.writer = reader, writer

    def close(self) -> None:
        try:
            self.writer.close()
        except Exception:
            pass


class AsyncHttp:
    """HTTP/1.1 POST and GET over asyncio streams with a pool of kept-alive connections."""

    def __init__(self, url: str, timeout: float = 600.0, max_connections: int = 32,
                 token: Optional[str] = None, ca_file: Optional[str] = None):
        parsed = urllib.parse.urlsplit(url if "://" in url else "http://" + url)
        if parsed.scheme not in ("http", "https"):
            raise errors.TransportError(f"only http:// and https:// URLs are supported, got {url}")
        self.url = f"{parsed.scheme}://{parsed.netloc}"
        self.host = parsed.hostname or "127.0.0.1"
        self.port = parsed.port or (443 if parsed.scheme == "https" else 80)
        self.ca_file = ca_file
        self.ssl_context = transport.tls_context(ca_file) if parsed.scheme == "https" else None
        self.path = parsed.path or "/"
        self.timeout = timeout
        self.token = token if token is not None else os.environ.get("STEAMCELL_TOKEN") or None
        self._idle: List[_Conn] = []
        self._slots = asyncio.Semaphore(max(1, int(max_connections)))
        self._closed = False
        #: Connections opened so far.
        self.opened = 0

    async def _open(self) -> _Conn:
        try:
            if self.ssl_context is not None:
                opened = asyncio.open_connection(self.host, self.port, ssl=self.ssl_context,
                                                 server_hostname=self.host)
            else:
                opened = asyncio.open_connection(self.host, self.port)
            r, w = await asyncio.wait_for(opened, self.timeout)
        except (OSError, asyncio.TimeoutError) as e:
            raise errors.TransportError(f"cannot reach steamcell at {self.url}: {e!r}") from e
        self.opened += 1
        return _Conn(r, w)

    async def _exchange(self, conn: _Conn, head: bytes, body: bytes) -> Tuple[int, Dict[str, str], bytes]:
        conn.writer.write(head + body)
        await conn.writer.drain()
        line = await conn.reader.readline()
        if not line:
            raise ConnectionResetError("connection closed before the answer")
        parts = line.decode("latin-1").split(" ", 2)
        if len(parts) < 2 or not parts[0].startswith("HTTP/"):
            raise errors.TransportError(f"not an HTTP answer from {self.url}: {line[:100]!r}")
        status = int(parts[1])
        headers: Dict[str, str] = {}
        while True:
            h = await conn.reader.readline()
            if h in (b"\r\n", b"\n", b""):
                break
            k, _, v = h.decode("latin-1").partition(":")
            headers[k.strip().lower()] = v.strip()
        if headers.get("transfer-encoding", "").lower() == "chunked":
            chunks = []
            while True:
                size = int((await conn.reader.readline()).split(b";")[0].strip() or b"0", 16)
                if size == 0:
                    while (await conn.reader.readline()) not in (b"\r\n", b"\n", b""):
                        pass
                    break
                chunks.append(await conn.reader.readexactly(size))
                await conn.reader.readexactly(2)
            data = b"".join(chunks)
        elif "content-length" in headers:
            data = await conn.reader.readexactly(int(headers["content-length"]))
        else:
            data = await conn.reader.read()
            headers["connection"] = "close"
        return status, headers, data

    async def request(self, method: str, path: str, body: bytes = b"",
                      content_type: str = "application/json") -> Tuple[int, str, bytes]:
        """(status, content type, body) of one request on a pooled connection."""
        if self._closed:
            raise errors.TransportError(f"the connection to {self.url} is closed")
        head = (f"{method} {path} HTTP/1.1\r\nHost: {self.host}:{self.port}\r\n"
                f"Content-Type: {content_type}\r\nContent-Length: {len(body)}\r\n"
                + (f"Authorization: Bearer {self.token}\r\n" if self.token else "")
                + "Connection: keep-alive\r\n\r\n").encode("latin-1")
        async with self._slots:
            while True:
                reused = bool(self._idle)
                conn = self._idle.pop() if reused else await self._open()
                try:
                    status, headers, data = await asyncio.wait_for(
                        self._exchange(conn, head, body), self.timeout)
                except (ConnectionResetError, BrokenPipeError, asyncio.IncompleteReadError) as e:
                    conn.close()
                    if reused:  # a kept-alive connection the server closed: try a fresh one
                        continue
                    raise errors.TransportError(f"cannot reach steamcell at {self.url}: {e!r}") from e
                except (OSError, asyncio.TimeoutError) as e:
                    conn.close()
                    raise errors.TransportError(f"cannot reach steamcell at {self.url}: {e!r}") from e
                except BaseException:
                    conn.close()  # cancelled mid-answer: the connection is in an unknown state
                    raise
                if headers.get("connection", "").lower() == "close" or self._closed:
                    conn.close()
                else:
                    self._idle.append(conn)
                return status, headers.get("content-type", ""), data

    async def send(self, req: Dict[str, Any]) -> Dict[str, Any]:
        body = json.dumps(req, allow_nan=False).encode()
        status, _, data = await self.request("POST", self.path, body)
        if status != 200 and not data.strip().startswith(b"{"):
            raise transport.http_failure(status, self.url, data)
        try:
            return json.loads(data)
        except ValueError as e:
            raise errors.TransportError(f"not a JSON-RPC answer from {self.url}: {data[:200]!r}") from e

    async def close(self) -> None:
        self._closed = True
        idle, self._idle = self._idle, []
        for c in idle:
            c.close()
            try:
                await c.writer.wait_closed()
            except Exception:
                pass


class _AsyncNamespace:
    """``c.turbine`` -> object whose ``expand(...)`` is the coroutine of ``turbine.expand``."""

    def __init__(self, client: "AsyncClient", prefix: str):
        self._client, self._prefix = client, prefix

    def __getattr__(self, name: str):
        fn = WRAPPERS.get(f"{self._prefix}.{name}")
        if fn is None:
            raise AttributeError(f"no method {self._prefix}.{name} in the OpenRPC document")
        return fn.__get__(self._client, AsyncClient)

    def __dir__(self):
        return [m.split(".", 1)[1] for m in WRAPPERS if m.startswith(self._prefix + ".")]


class AsyncClient:
    """A steamcell server seen from asyncio. Use :func:`connect`."""

    def __init__(self, url: str, owned: Any = None, timeout: float = 600.0,
                 max_connections: int = 32, token: Optional[str] = None,
                 ca_file: Optional[str] = None):
        self._http = AsyncHttp(url, timeout=timeout, max_connections=max_connections,
                               token=token, ca_file=ca_file)
        self._owned = owned  # the spawned server's transport, stopped by close()
        self._sync: Optional[Client] = None
        self.url = self._http.url
        self.banner: Optional[str] = getattr(owned, "banner", None)

    def __repr__(self) -> str:
        return f"<steamcell.aio.AsyncClient {self.url}>"

    def __getattr__(self, name: str):
        if any(m.startswith(name + ".") for m in WRAPPERS):
            return _AsyncNamespace(self, name)
        raise AttributeError(name)

    async def __aenter__(self) -> "AsyncClient":
        return self

    async def __aexit__(self, *exc) -> None:
        await self.close()

    async def close(self) -> None:
        """Closes the connections and stops a server this client started."""
        await self._http.close()
        if self._sync is not None:
            self._sync._tr.close()
        if self._owned is not None:
            await asyncio.to_thread(self._owned.close)
            self._owned = None

    @property
    def opened(self) -> int:
        """HTTP connections opened so far."""
        return self._http.opened

    async def call_raw(self, method: str, params: Optional[Dict[str, Any]] = None) -> Any:
        req = {"jsonrpc": "2.0", "id": transport.next_id(), "method": method,
               "params": _jsonable(params or {})}
        resp = await self._http.send(req)
        if resp.get("error") is not None:
            raise errors.from_rpc(resp["error"])
        if "result" not in resp:
            raise errors.TransportError(f"answer without result or error: {resp!r}")
        return resp["result"]

    async def call(self, method: str, /, **params: Any) -> Any:
        return wrap(await self.call_raw(method, params))

    async def state(self, units: Optional[str] = None, ambient: Any = None, **kwargs: Any) -> State:
        """One state, e.g. ``await c.state(p="42 barg", T="410 degC")`` (see Client.state)."""
        given = {k: v for k, v in kwargs.items() if k in STATE_KEYS}
        params: Dict[str, Any] = {k: v for k, v in kwargs.items() if k not in STATE_KEYS}
        params["given"] = given
        if units is not None:
            params["units"] = units
        if ambient is not None:
            params["ambient"] = ambient
        return State(wrap(await self.call_raw("water.state", params)))

    async def info(self) -> Any:
        return await self.call("server.info")

    async def health(self) -> str:
        status, _, data = await self._http.request("GET", "/health")
        if status != 200:
            raise errors.TransportError(f"/health answered {status}: {data!r}")
        return data.decode().strip()

    def _sync_client(self) -> Client:
        if self._sync is None:
            self._sync = Client(transport.HttpTransport(self.url, timeout=self._http.timeout,
                                                        token=self._http.token,
                                                        ca_file=self._http.ca_file))
        return self._sync

    async def batch(self, data: Any, **kwargs: Any) -> Any:
        """``Client.batch`` (packed columns, same arguments and result) in a worker thread."""
        kwargs.setdefault("progress", False)
        return await asyncio.to_thread(self._sync_client().batch, data, **kwargs)

    async def balance(self, network: Any, units: Optional[str] = None, **opts: Any):
        """``balance.solve`` as a :class:`steamcell.balance.Balance`."""
        from . import balance as _b
        params: Dict[str, Any] = dict(opts, network=_b._network(network))
        if units is not None:
            params["units"] = units
        return _b.Balance(await self.call_raw("balance.solve", params))


for _name, _fn in WRAPPERS.items():
    if not hasattr(AsyncClient, _fn.__name__):
        setattr(AsyncClient, _fn.__name__, _fn)  # returns self.call(...): a coroutine here


class _Connecting:
    """What :func:`connect` returns: await it, or use it in ``async with``."""

    def __init__(self, url, binary, timeout, serve_args, max_connections, token=None,
                 ca_file=None, expect_digest=None):
        self._args = (url, binary, timeout, tuple(serve_args), max_connections)
        self._token, self._ca_file = token, ca_file
        self._expect = expected_digest(expect_digest)
        self._client: Optional[AsyncClient] = None

    async def _make(self) -> AsyncClient:
        url, binary, timeout, serve_args, max_connections = self._args
        if url:
            client = AsyncClient(url, timeout=timeout, max_connections=max_connections,
                                 token=self._token, ca_file=self._ca_file)
        else:
            path = transport.find_binary(binary)
            owned = await asyncio.to_thread(transport.SpawnedHttpTransport, path,
                                            timeout=timeout, extra_args=serve_args,
                                            token=self._token)
            client = AsyncClient(owned.url, owned=owned, timeout=timeout,
                                 max_connections=max_connections, token=self._token)
        if self._expect:
            try:
                found = (await client.call_raw("server.info")).get("digest")
            except BaseException:
                await client.close()
                raise
            if found != self._expect:
                await client.close()
                raise digest_mismatch(client.url, self._expect, found)
        return client

    def __await__(self):
        return self._make().__await__()

    async def __aenter__(self) -> AsyncClient:
        self._client = await self._make()
        return self._client

    async def __aexit__(self, *exc) -> None:
        if self._client is not None:
            await self._client.close()


def connect(url: Optional[str] = None, binary: Optional[str] = None, *, timeout: float = 600.0,
            serve_args: Sequence[str] = (), max_connections: int = 32,
            token: Optional[str] = None, ca_file: Optional[str] = None,
            expect_digest: Optional[str] = None) -> _Connecting:
    """Connects from asyncio: ``c = await steamcell.aio.connect()`` or
    ``async with steamcell.aio.connect() as c:``. Without ``url`` the binary is found and
    started as by :func:`steamcell.connect` (and stopped by ``await c.close()``). ``token``,
    ``ca_file`` (https:// servers) and ``expect_digest`` as for :func:`steamcell.connect`."""
    return _Connecting(url, binary, timeout, serve_args, max_connections, token, ca_file,
                       expect_digest)
