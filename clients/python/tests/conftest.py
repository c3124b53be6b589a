"""Session fixtures: the real steamcell binary, started once for the whole test session.

The binary is env STEAMCELL_BIN, default target/debug/steamcell of the repository root. A missing
binary is an error, not a skip: these tests exist to exercise the real server.
"""

import math
import os
from pathlib import Path

import pytest

import steamcell

REPO = Path(__file__).resolve().parents[3]
BIN = os.environ.get("STEAMCELL_BIN") or str(REPO / "target" / "debug" / "steamcell")


def tol(value: float, digits: int) -> float:
    """Tolerance to all printed digits: 1e-9 relative or half a unit of the last printed digit,
    whichever is looser (the project's rule for published check values)."""
    if value == 0:
        return 1e-12
    half_unit = 0.5 * 10 ** (math.floor(math.log10(abs(value))) - digits + 1)
    return max(1e-9 * abs(value), half_unit)


@pytest.fixture(scope="session")
def binary() -> str:
    assert Path(BIN).is_file(), f"steamcell binary not found at {BIN}: build it (cargo build) or set STEAMCELL_BIN"
    return BIN


@pytest.fixture(scope="session")
def client(binary):
    c = steamcell.connect(binary=binary)
    yield c
    c.close()
