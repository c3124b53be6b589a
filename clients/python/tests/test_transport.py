"""Transports: spawned HTTP server, an existing URL, stdio, /health, /cell, shutdown."""

import subprocess
import sys
import urllib.request

import pytest

import steamcell
from conftest import tol


def test_banner_and_health(client):
    assert client.banner.startswith("steamcell ") and "listening on http://" in client.banner
    assert client.health() == "ok"


def test_cell_endpoint(client):
    # IAPWS R7-97(2012) Table 5: T = 300 K, p = 3 MPa: h = 0.115331273e3 kJ/kg
    assert client.cell("h", p="3 MPa", T="300 K") == pytest.approx(115.331273, abs=tol(115.331273, 9))
    with pytest.raises(steamcell.Error):
        client.cell("h", p="3 MPa", T="5000 degC")


def test_connect_to_url(client):
    with steamcell.connect(client.url) as c2:
        assert c2.state(p=3, T="300 K").h == client.state(p=3, T="300 K").h


def test_close_stops_the_server(binary):
    c = steamcell.connect(binary=binary)
    proc = c._tr.child.proc
    assert c.health() == "ok"
    c.close()
    assert proc.poll() is not None


def test_interpreter_exit_stops_the_server(binary):
    code = ("import steamcell; c = steamcell.connect(binary=%r); print(c.url, flush=True)" % binary)
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert out.returncode == 0, out.stderr
    url = out.stdout.strip()
    assert url.startswith("http://127.0.0.1:")
    with pytest.raises(OSError):
        urllib.request.urlopen(url + "/health", timeout=5)


def test_stdio_transport(binary, client):
    with steamcell.connect(transport="stdio", binary=binary) as c:
        st = c.state(p=3, T="300 K")
        # IAPWS R7-97(2012) Table 5: v = 0.100215168e-2 m3/kg at 300 K, 3 MPa
        assert st.v == pytest.approx(0.00100215168, abs=tol(0.00100215168, 9))
        assert st.h == client.state(p=3, T="300 K").h
        with pytest.raises(steamcell.OutOfRange):
            c.state(p=3, T="5000 degC")
        assert c.state(p="42 barg", T="410 degC").phase == "vapour"  # still alive after an error


def test_missing_binary_is_a_transport_error(tmp_path):
    with pytest.raises(steamcell.TransportError):
        steamcell.connect(binary=str(tmp_path / "nope"))
