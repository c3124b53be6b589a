"""The engine the spreadsheet functions call: a team server (URL, token and, for an https://
server, the CA file from the add-in's options or STEAMCELL_URL / STEAMCELL_TOKEN /
STEAMCELL_CA_FILE), or by default the `steamcell` program started as a
child on a free loopback port, with a random token only this add-in knows, and stopped with the
spreadsheet (the child is told `--stop-on-stdin-eof` and this process holds its stdin, so it ends
even when the spreadsheet is killed). JSON-RPC 2.0 over HTTP with keep-alive, standard library
only.

Nothing here is stored in a workbook: the binary's path, the server's URL, the token, the CA
file, the expected validation digest and the site files come from the add-in's options or the
environment of the spreadsheet program.

Pinning: with an expected validation digest (option ExpectDigest, or STEAMCELL_EXPECT_DIGEST)
the engine asks `server.info` when it starts and refuses an engine (team server or embedded
program) whose digest differs; every cell then shows #N/A and SC.WHY names both digests.

Every failure is a CellError: kind "engine" (the cell shows #N/A) when no engine answers, with a
message that says what to install or start; kind "value" for an error the engine returns.
"""

from __future__ import annotations

import http.client
import json
import os
import secrets
import shutil
import socket
import ssl
import subprocess
import tempfile
import threading
import urllib.parse
from dataclasses import dataclass, field

from .cells import CellError

# Where the user sets the options (the message of a missing engine names it).
OPTIONS_PLACE = "Tools > Options > LibreOffice Calc > steamcell"
ENV_BINARY = "STEAMCELL_BIN"
ENV_URL = "STEAMCELL_URL"
ENV_TOKEN = "STEAMCELL_TOKEN"
ENV_SITES = "STEAMCELL_SITES"
ENV_CA_FILE = "STEAMCELL_CA_FILE"
ENV_EXPECT_DIGEST = "STEAMCELL_EXPECT_DIGEST"
START_TIMEOUT_S = 30.0
CALL_TIMEOUT_S = 60.0


@dataclass
class Settings:
    """What the add-in's options and the environment say (options win where both are set)."""

    binary: str = ""
    server_url: str = ""
    token: str = ""
    sites: str = ""
    ca_file: str = ""
    expect_digest: str = ""
    source: dict = field(default_factory=dict)

    @staticmethod
    def resolve(options: dict, env=None) -> "Settings":
        env = os.environ if env is None else env
        s = Settings()
        for attr, key, var in (("binary", "EngineBinary", ENV_BINARY), ("server_url", "ServerUrl", ENV_URL),
                               ("token", "ServerToken", ENV_TOKEN), ("sites", "Sites", ENV_SITES),
                               ("ca_file", "ServerCaFile", ENV_CA_FILE),
                               ("expect_digest", "ExpectDigest", ENV_EXPECT_DIGEST)):
            value = (options.get(key) or "").strip()
            if value:
                setattr(s, attr, value)
                s.source[attr] = f"the add-in's option {key}"
            elif (env.get(var) or "").strip():
                setattr(s, attr, env[var].strip())
                s.source[attr] = f"the environment variable {var}"
        return s

    def site_list(self):
        """[(name, file)] from "name=file; name=file" (also newline-separated)."""
        out = []
        for item in self.sites.replace("\n", ";").split(";"):
            item = item.strip()
            if not item:
                continue
            name, sep, path = item.partition("=")
            if not sep or not name.strip() or not path.strip():
                raise CellError(f"sites: '{item}' is not name=file (from {self.source.get('sites')})")
            out.append((name.strip(), os.path.expanduser(path.strip())))
        return out

    def key(self):
        return (self.binary, self.server_url, self.token, self.sites, self.ca_file,
                self.expect_digest)


def find_binary(settings: Settings):
    """The steamcell program: the option or STEAMCELL_BIN, else `steamcell` on PATH, else
    ~/.cargo/bin (where `cargo install` puts it). None when there is none."""
    if settings.binary:
        return settings.binary
    exe = "steamcell.exe" if os.name == "nt" else "steamcell"
    found = shutil.which(exe)
    if found:
        return found
    cargo = os.path.join(os.path.expanduser("~"), ".cargo", "bin", exe)
    if os.path.isfile(cargo) and os.access(cargo, os.X_OK):
        return cargo
    return None


def not_found_message() -> str:
    return ("no steamcell engine: install the steamcell program (from its repository: cargo "
            "install --path .) so that it is on PATH, or set its path in "
            f"{OPTIONS_PLACE} (or the {ENV_BINARY} environment variable), or set a team "
            f"server there ({ENV_URL} and {ENV_TOKEN})")


class Engine:
    """One connection to a steamcell engine (embedded child or team server)."""

    def __init__(self, settings: Settings):
        self.settings = settings
        self.child = None
        self.url = None
        self.token = None
        self.site_error = None  # why the embedded engine runs without its sites
        self._conn = None
        self._lock = threading.RLock()
        self._ids = 0
        self._log = None
        self._tls = None

    # ------------------------------------------------------------------ start and stop

    def start(self) -> None:
        with self._lock:
            if self.settings.server_url:
                self._use_server()
            else:
                self._start_child()
            self._pin()

    def _pin(self) -> None:
        """Refuses the engine unless it reports the expected validation digest."""
        want = self.settings.expect_digest.strip()
        if not want:
            return
        found = (self.call("server.info", None) or {}).get("digest")
        if found != want:
            where = self.settings.source.get("expect_digest")
            raise CellError(f"the steamcell engine at {self.url} reports the validation digest "
                            f"{found}, not the expected {want} (from {where}): a different or "
                            "unvalidated build, so no cell is computed", "engine")

    def describe(self) -> str:
        if self.child is not None:
            return f"embedded engine {self.binary} (pid {self.child.pid}, {self.url})"
        if self.url:
            return f"team server {self.url}"
        return "no engine"

    def _use_server(self) -> None:
        url = self.settings.server_url.rstrip("/")
        parts = urllib.parse.urlsplit(url)
        if parts.scheme not in ("http", "https") or not parts.netloc:
            raise CellError(f"the team server address '{url}' (from "
                            f"{self.settings.source.get('server_url')}) is not an http:// or "
                            "https:// URL", "engine")
        self.url = url
        self.token = self.settings.token or None
        if parts.scheme == "https":
            ca_file = self.settings.ca_file or None
            if ca_file and not os.path.isfile(os.path.expanduser(ca_file)):
                raise CellError(f"the CA file '{ca_file}' (from {self.settings.source.get('ca_file')}) "
                                "does not exist", "engine")
            try:
                self._tls = ssl.create_default_context(
                    cafile=os.path.expanduser(ca_file) if ca_file else None)
            except (ssl.SSLError, OSError) as e:
                raise CellError(f"the CA file '{ca_file}' cannot be used: {e}", "engine") from None
        # One call now, so a wrong address, certificate or token is reported at once.
        self.call("server.info", None)

    def _start_child(self) -> None:
        binary = find_binary(self.settings)
        if not binary:
            raise CellError(not_found_message(), "engine")
        if not os.path.isfile(binary):
            raise CellError(f"the steamcell program '{binary}' (from "
                            f"{self.settings.source.get('binary', 'PATH')}) does not exist: "
                            f"install steamcell or correct the path in {OPTIONS_PLACE} "
                            f"({ENV_BINARY})", "engine")
        self.binary = binary
        sites = self.settings.site_list()
        try:
            self._spawn(binary, sites)
        except CellError as e:
            if not sites:
                raise
            # A broken site file must not take every other function down with it.
            self.site_error = e.message
            self._spawn(binary, [])

    def _spawn(self, binary: str, sites, stop_flag: bool = True) -> None:
        token = secrets.token_hex(24)
        args = [binary, "serve", "--listen", "127.0.0.1:0"]
        if stop_flag:
            args.append("--stop-on-stdin-eof")
        for name, path in sites:
            args += ["--site", f"{name}={path}"]
        env = dict(os.environ)
        env[ENV_TOKEN] = token
        env.pop("RUST_LOG", None)
        self._log = tempfile.TemporaryFile()
        flags = 0x08000000 if os.name == "nt" else 0  # CREATE_NO_WINDOW
        try:
            child = subprocess.Popen(args, stdin=subprocess.PIPE, stdout=subprocess.PIPE,
                                     stderr=self._log, env=env, close_fds=True,
                                     creationflags=flags)
        except OSError as e:
            raise CellError(f"the steamcell program '{binary}' cannot be started ({e.strerror}): "
                            f"install steamcell or correct the path in {OPTIONS_PLACE} "
                            f"({ENV_BINARY})", "engine") from None
        line = _first_line(child.stdout, START_TIMEOUT_S)
        if "listening on http://" not in line:
            try:
                child.kill()
                child.wait(5)
            except Exception:
                pass
            self._log.seek(0)
            said = self._log.read().decode("utf-8", "replace").strip().splitlines()
            reason = said[-1] if said else (line.strip() or "no answer")
            if stop_flag and any("--stop-on-stdin-eof" in x for x in said):
                # an older steamcell: it then stops with the spreadsheet only when told to
                return self._spawn(binary, sites, stop_flag=False)
            raise CellError(f"the steamcell engine '{binary}' did not start: {reason}", "engine")
        self.child = child
        self.url = "http://" + line.split("http://", 1)[1].split()[0]
        self.token = token

    def close(self) -> None:
        """Stops the embedded engine (closing its stdin ends it; then SIGTERM, then kill)."""
        with self._lock:
            if self._conn is not None:
                try:
                    self._conn.close()
                except Exception:
                    pass
                self._conn = None
            child, self.child = self.child, None
            if child is None:
                return
            try:
                child.stdin.close()
                child.wait(3)
            except Exception:
                try:
                    child.terminate()
                    child.wait(3)
                except Exception:
                    child.kill()
            for f in (child.stdout,):
                try:
                    f.close()
                except Exception:
                    pass

    def alive(self) -> bool:
        return self.child is None or self.child.poll() is None

    # ------------------------------------------------------------------ calls

    def _connection(self):
        if self._conn is None:
            parts = urllib.parse.urlsplit(self.url)
            if parts.scheme == "https":
                self._conn = http.client.HTTPSConnection(parts.hostname, parts.port,
                                                         timeout=CALL_TIMEOUT_S, context=self._tls)
            else:
                self._conn = http.client.HTTPConnection(parts.hostname, parts.port,
                                                        timeout=CALL_TIMEOUT_S)
        return self._conn

    def _headers(self, content_type=None):
        h = {"Accept": "application/json"}
        if content_type:
            h["Content-Type"] = content_type
        if self.token:
            h["Authorization"] = "Bearer " + self.token
        return h

    def _http(self, method: str, target: str, body=None, content_type=None):
        """(status, body bytes); one retry on a fresh connection after a dropped keep-alive."""
        with self._lock:
            last = None
            for attempt in range(2):
                conn = self._connection()
                try:
                    conn.request(method, target, body=body, headers=self._headers(content_type))
                    resp = conn.getresponse()
                    data = resp.read()
                    if resp.getheader("Connection", "").lower() == "close":
                        conn.close()
                        self._conn = None
                    return resp.status, data
                except (OSError, http.client.HTTPException) as e:
                    last = e
                    try:
                        conn.close()
                    except Exception:
                        pass
                    self._conn = None
                    if isinstance(e, socket.timeout):
                        break
            raise CellError(self._unreachable(last), "engine")

    def _unreachable(self, e) -> str:
        if self.child is not None:
            if self.child.poll() is not None:
                return (f"the embedded steamcell engine stopped (exit code {self.child.returncode}); "
                        "recalculate to start it again")
            return f"the embedded steamcell engine does not answer ({e})"
        where = self.settings.source.get("server_url", "the add-in's options")
        if isinstance(e, ssl.SSLCertVerificationError):
            return (f"the steamcell server at {self.url} has a certificate this computer does not "
                    f"trust ({e.verify_message}): set the CA file in {OPTIONS_PLACE} "
                    f"({ENV_CA_FILE})")
        return (f"cannot reach the steamcell server at {self.url} ({_reason(e)}): start it "
                f"(steamcell serve) or correct the server address in {where}")

    def _rpc_body(self, calls):
        out = []
        for method, params in calls:
            self._ids += 1
            req = {"jsonrpc": "2.0", "id": self._ids, "method": method}
            if params is not None:
                req["params"] = params
            out.append(req)
        return out

    def _post(self, payload):
        status, data = self._http("POST", "/", json.dumps(payload, separators=(",", ":")).encode(),
                                  "application/json")
        if status == 401:
            raise CellError(f"the steamcell server at {self.url} refused the token: set the right "
                            f"token in {OPTIONS_PLACE} ({ENV_TOKEN})", "engine")
        if status == 403:
            raise CellError(f"the steamcell server at {self.url} refused this client: "
                            f"{data.decode('utf-8', 'replace').strip()}", "engine")
        try:
            return json.loads(data)
        except ValueError:
            raise CellError(f"the steamcell server at {self.url} answered HTTP {status} without "
                            f"JSON: {data[:200].decode('utf-8', 'replace')}", "engine") from None

    def call(self, method: str, params):
        """The result of one JSON-RPC call; CellError with the engine's message otherwise."""
        answer = self._post(self._rpc_body([(method, params)])[0])
        return _result(answer)

    def batch(self, calls):
        """One JSON-RPC batch: a list with, per call, its result or a CellError."""
        if not calls:
            return []
        reqs = self._rpc_body(calls)
        answer = self._post(reqs)
        if isinstance(answer, dict):  # the whole batch refused (e.g. too many calls)
            err = _result_or_error(answer)
            return [err] * len(calls)
        by_id = {a.get("id"): a for a in answer if isinstance(a, dict)}
        return [_result_or_error(by_id.get(r["id"], {"error": {"message": "no answer"}}))
                for r in reqs]

    def get_text(self, target: str):
        """GET a plain-text route: (status, text)."""
        status, data = self._http("GET", target)
        return status, data.decode("utf-8", "replace").strip()


def _reason(e) -> str:
    if isinstance(e, ConnectionRefusedError):
        return "connection refused"
    if isinstance(e, socket.timeout):
        return f"no answer within {CALL_TIMEOUT_S:.0f} s"
    if isinstance(e, socket.gaierror):
        return "unknown host name"
    return str(e) or type(e).__name__


def _result_or_error(answer):
    try:
        return _result(answer)
    except CellError as e:
        return e


def _result(answer):
    if not isinstance(answer, dict):
        raise CellError(f"unexpected answer from the engine: {str(answer)[:200]}", "engine")
    if "error" in answer:
        err = answer["error"] or {}
        raise CellError(str(err.get("message", "error")))
    return answer.get("result")


def _first_line(stream, timeout: float) -> str:
    """The first line a child writes, or "" when it writes none in time (a thread reads it so
    that this works on every platform)."""
    box = []

    def read():
        try:
            box.append(stream.readline().decode("utf-8", "replace"))
        except Exception:
            box.append("")

    t = threading.Thread(target=read, daemon=True)
    t.start()
    t.join(timeout)
    return box[0] if box else ""
