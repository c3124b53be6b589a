"""A team server seen from Python: https:// with a CA file (argument and STEAMCELL_CA_FILE), a
server certificate from an unknown CA refused, named tokens (a call outside the token's
allow-list raises steamcell.Forbidden), the pinned validation digest (connect(...,
expect_digest=...) and steamcell.aio.connect) refusing another digest with both named, and
GET /metrics read by the Prometheus project's own text-format parser (prometheus_client) with
its counters checked after known calls.

The certificates are made here with the openssl command (a private CA and a server
certificate for 127.0.0.1 and localhost). Check value: IAPWS R7-97(2012) Table 5, p = 3 MPa,
T = 300 K: h = 115.331273 kJ/kg.
"""

import asyncio
import re
import subprocess
import sys
from pathlib import Path

import pytest

import steamcell
import steamcell.aio

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
from testcerts import make_ca_and_cert, token_line  # noqa: E402  (clients/testcerts.py)

H_TABLE5 = 115.331273
TOKEN = "python-team-test-token-7f6e5d4c3b2a1908"
LIMITED = "python-limited-token-0a1b2c3d4e5f6a7b"


@pytest.fixture(scope="module")
def team(binary, tmp_path_factory):
    """A TLS server with two named tokens: (url, ca, other_ca, process)."""
    d = tmp_path_factory.mktemp("team")
    ca, cert, key = make_ca_and_cert(d, "plant")
    other_ca, _, _ = make_ca_and_cert(d, "elsewhere")
    tokens = d / "tokens"
    tokens.write_text(token_line("notebook", TOKEN) + "\n"
                      + token_line("dashboard", LIMITED, "methods=server.info") + "\n")
    proc = subprocess.Popen([binary, "serve", "--listen", "127.0.0.1:0", "--tls-cert", str(cert),
                             "--tls-key", str(key), "--tokens-file", str(tokens)],
                            stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True)
    line = proc.stdout.readline()
    m = re.search(r"listening on (https://\S+)", line)
    assert m, line
    yield m.group(1), str(ca), str(other_ca), proc
    proc.terminate()
    proc.wait(10)


def test_https_with_a_ca_file(team):
    url, ca, _, _ = team
    with steamcell.connect(url, token=TOKEN, ca_file=ca) as c:
        assert c.url == url
        st = c.state(p="3 MPa", T="300 K")
        assert abs(st.h - H_TABLE5) <= 0.5e-6
        assert c.health() == "ok"
        assert abs(c.cell("h", p="3 MPa", T="300 K") - H_TABLE5) <= 0.5e-6


def test_the_ca_file_from_the_environment(team, monkeypatch):
    url, ca, _, _ = team
    monkeypatch.setenv("STEAMCELL_CA_FILE", ca)
    with steamcell.connect(url, token=TOKEN) as c:
        assert abs(c.state(p="3 MPa", T="300 K").h - H_TABLE5) <= 0.5e-6


def test_a_certificate_from_another_ca_is_refused(team, monkeypatch):
    url, _, other_ca, _ = team
    monkeypatch.delenv("STEAMCELL_CA_FILE", raising=False)
    for ca_file in (other_ca, None):  # another CA, and the system's trust store
        c = steamcell.connect(url, token=TOKEN, ca_file=ca_file)
        with pytest.raises(steamcell.TransportError) as e:
            c.state(p="3 MPa", T="300 K")
        assert "CERTIFICATE_VERIFY_FAILED" in str(e.value) or "certificate" in str(e.value)
        c.close()
    with pytest.raises(steamcell.TransportError, match="does not exist"):
        steamcell.connect(url, ca_file="/nonexistent/ca.pem")


def test_a_token_outside_its_allow_list_is_forbidden(team):
    url, ca, _, _ = team
    with steamcell.connect(url, token=LIMITED, ca_file=ca) as c:
        assert c.info().digest
        with pytest.raises(steamcell.Forbidden) as e:
            c.state(p="3 MPa", T="300 K")
        assert e.value.code == 1010
        assert e.value.data["token"] == "dashboard"
        assert e.value.data["reason"] == "method"


def test_a_wrong_token_is_named_as_text(team, monkeypatch):
    """The server's one-line reason as text (it was shown as a bytes repr, b'...') and what to do."""
    url, ca, _, _ = team
    monkeypatch.delenv("STEAMCELL_TOKEN", raising=False)
    with steamcell.connect(url, token="not-a-token", ca_file=ca) as c:
        with pytest.raises(steamcell.TransportError) as e:
            c.state(p="3 MPa", T="300 K")
    msg = str(e.value)
    assert "HTTP 401" in msg and "missing or wrong token" in msg, msg
    assert "b'" not in msg and "token=" in msg, msg

    async def main():
        async with steamcell.aio.connect(url, ca_file=ca) as a:
            await a.state(p="3 MPa", T="300 K")
    with pytest.raises(steamcell.TransportError) as e:
        asyncio.run(main())
    assert "missing or wrong token" in str(e.value) and "b'" not in str(e.value), str(e.value)


def test_pinning_refuses_another_digest(team, binary):
    url, ca, _, _ = team
    with steamcell.connect(url, token=TOKEN, ca_file=ca) as c:
        digest = c.info().digest
    wrong = "if97-0000000000000000-259of259"
    with pytest.raises(steamcell.DigestMismatch) as e:
        steamcell.connect(url, token=TOKEN, ca_file=ca, expect_digest=wrong)
    assert wrong in str(e.value) and digest in str(e.value)
    assert e.value.data == {"kind": "digest_mismatch", "expected": wrong, "found": digest}
    with steamcell.connect(url, token=TOKEN, ca_file=ca, expect_digest=digest) as c:
        assert abs(c.state(p="3 MPa", T="300 K").h - H_TABLE5) <= 0.5e-6
    # A server the client starts itself is pinned too, and stopped when refused.
    with pytest.raises(steamcell.DigestMismatch):
        steamcell.connect(binary=binary, expect_digest=wrong)
    with steamcell.connect(binary=binary, expect_digest=digest) as c:
        assert c.info().digest == digest


def test_pinning_from_asyncio(team, monkeypatch):
    url, ca, _, _ = team
    wrong = "if97-1111111111111111-259of259"

    async def main():
        async with steamcell.aio.connect(url, token=TOKEN, ca_file=ca) as c:
            digest = (await c.info()).digest
            st = await c.state(p="3 MPa", T="300 K")
            assert abs(st.h - H_TABLE5) <= 0.5e-6
        with pytest.raises(steamcell.DigestMismatch) as e:
            await steamcell.aio.connect(url, token=TOKEN, ca_file=ca, expect_digest=wrong)
        assert wrong in str(e.value) and digest in str(e.value)
        monkeypatch.setenv("STEAMCELL_EXPECT_DIGEST", wrong)
        with pytest.raises(steamcell.DigestMismatch):
            await steamcell.aio.connect(url, token=TOKEN, ca_file=ca)
        monkeypatch.setenv("STEAMCELL_EXPECT_DIGEST", digest)
        c = await steamcell.aio.connect(url, token=TOKEN, ca_file=ca)
        assert (await c.info()).digest == digest
        await c.close()

    asyncio.run(main())


def test_metrics_read_by_the_prometheus_parser(team):
    from prometheus_client.parser import text_string_to_metric_families

    url, ca, _, _ = team
    with steamcell.connect(url, token=TOKEN, ca_file=ca) as c:
        for _ in range(4):
            c.call_raw("water.saturation", {"T": "373.15 K"})
        with pytest.raises(steamcell.OutOfRange):
            c.state(p="300 MPa", T="300 K")
        status, _, body = c._tr.request("GET", "/metrics")
    assert status == 200
    families = {f.name: f for f in text_string_to_metric_families(body.decode())}
    # prometheus_client names counter families without the _total suffix.
    calls = {s.labels["method"]: s.value for s in families["steamcell_calls"].samples
             if s.name == "steamcell_calls_total"}
    assert calls["water.saturation"] == 4
    errors = {(s.labels["method"], s.labels["code"]): s.value
              for s in families["steamcell_call_errors"].samples}
    assert errors[("water.state", "1001")] == 1
    hist = families["steamcell_call_duration_seconds"]
    assert hist.type == "histogram"
    count = [s.value for s in hist.samples if s.name.endswith("_count")
             and s.labels["method"] == "water.saturation"]
    assert count == [4]
    build = [f for name, f in families.items() if name.startswith("steamcell_build")]
    info = build[0].samples[0]
    assert info.value == 1
    assert info.labels["version"] == steamcell.__version__
    assert info.labels["digest"].startswith("if97-")
