"""Exceptions raised by the steamcell client.

Every JSON-RPC error object ``{code, message, data}`` from the server becomes an instance of a
:class:`Error` subclass chosen by its code (falling back to ``data["kind"]``). The instance keeps
``code``, ``message`` and ``data`` as attributes; ``kind`` is ``data.get("kind")``.
"""

from __future__ import annotations

from typing import Any, Dict, Optional, Type


class Error(Exception):
    """A steamcell error: a JSON-RPC error object, or a failure to reach the server."""

    code: Optional[int] = None
    kind_name: Optional[str] = None

    def __init__(self, message: str, code: Optional[int] = None, data: Any = None):
        super().__init__(message)
        self.message = message
        if code is not None:
            self.code = code
        self.data = data if data is not None else {}

    @property
    def kind(self) -> Optional[str]:
        if isinstance(self.data, dict) and "kind" in self.data:
            return self.data["kind"]
        return self.kind_name

    def __str__(self) -> str:  # "[1001 out_of_range] T = ... is above ..."
        tag = " ".join(str(x) for x in (self.code, self.kind) if x is not None)
        return f"[{tag}] {self.message}" if tag else self.message


class TransportError(Error):
    """The server could not be started, reached or understood."""


class WorkerEngineLost(TransportError):
    """A Dask worker's steamcell engine (or its team server) was lost: the partition it was
    computing was not computed (the message names the worker, the engine and the rows)."""


class OutOfRange(Error):
    code, kind_name = 1001, "out_of_range"


class NotFinite(Error):
    code, kind_name = 1002, "not_finite"


class NoUniqueState(Error):
    code, kind_name = 1003, "no_unique_state"


class UnknownUnit(Error):
    code, kind_name = 1004, "unknown_unit"


class WrongDimension(Error):
    code, kind_name = 1005, "wrong_dimension"


class InvalidInput(Error):
    code, kind_name = 1006, "invalid_input"


class NotConverged(Error):
    code, kind_name = 1007, "not_converged"


class LimitExceeded(Error):
    code, kind_name = 1008, "limit_exceeded"


class Infeasible(Error):
    code, kind_name = 1009, "infeasible"


class Forbidden(Error):
    """The token does not permit the call: the method is not in its allow-list, or the token
    was revoked or has expired (``data["reason"]``: "method", "revoked", "expired")."""
    code, kind_name = 1010, "forbidden"


class DigestMismatch(Error):
    """The server's validation digest is not the one the client demanded (``expect_digest``):
    ``data["expected"]`` and ``data["found"]``. The client was closed."""
    code, kind_name = None, "digest_mismatch"


class ParseError(Error):
    code, kind_name = -32700, "parse_error"


class InvalidRequest(Error):
    code, kind_name = -32600, "invalid_request"


class MethodNotFound(Error):
    code, kind_name = -32601, "method_not_found"


class InvalidParams(Error):
    code, kind_name = -32602, "invalid_params"


class InternalError(Error):
    code, kind_name = -32603, "internal_error"


_CLASSES = [
    OutOfRange, NotFinite, NoUniqueState, UnknownUnit, WrongDimension, InvalidInput,
    NotConverged, LimitExceeded, Infeasible, Forbidden, ParseError, InvalidRequest,
    MethodNotFound, InvalidParams, InternalError,
]
BY_CODE: Dict[int, Type[Error]] = {c.code: c for c in _CLASSES}  # type: ignore[misc]
BY_KIND: Dict[str, Type[Error]] = {c.kind_name: c for c in _CLASSES}  # type: ignore[misc]


def from_rpc(obj: Dict[str, Any]) -> Error:
    """Builds the exception for a JSON-RPC error object."""
    code = obj.get("code")
    message = str(obj.get("message", "unknown error"))
    data = obj.get("data")
    cls: Type[Error] = Error
    if isinstance(code, int) and code in BY_CODE:
        cls = BY_CODE[code]
    elif isinstance(data, dict) and data.get("kind") in BY_KIND:
        cls = BY_KIND[data["kind"]]
    return cls(message, code=code if isinstance(code, int) else None, data=data)
