"""steamcell: a Python client for the steamcell calculation server (water and steam properties by
IAPWS-IF97, steam-plant components), for notebooks and scripts.

    import steamcell
    with steamcell.connect() as c:            # starts the local server binary
        st = c.state(p="42 barg", T="410 degC")
        st.h, st.units["h"]

Standard library only; pandas, tqdm and matplotlib are used when installed (extra ``[all]``).
"""

from .client import Client, connect, WRAPPERS as methods
from .errors import (Error, TransportError, WorkerEngineLost, OutOfRange, NotFinite, NoUniqueState, UnknownUnit,
                     WrongDimension, InvalidInput, NotConverged, LimitExceeded, Infeasible,
                     Forbidden, DigestMismatch, ParseError, InvalidRequest, MethodNotFound, InvalidParams, InternalError)
from .records import Record, State
from .transport import find_binary
from . import aio
from . import uncertainty

__version__ = "0.1.0"

__all__ = [
    "connect", "aio", "uncertainty", "Client", "State", "Record", "methods", "find_binary",
    "Error", "TransportError", "WorkerEngineLost", "OutOfRange", "NotFinite", "NoUniqueState", "UnknownUnit",
    "WrongDimension", "InvalidInput", "NotConverged", "LimitExceeded", "Infeasible",
    "Forbidden", "DigestMismatch", "ParseError", "InvalidRequest", "MethodNotFound", "InvalidParams", "InternalError",
]
