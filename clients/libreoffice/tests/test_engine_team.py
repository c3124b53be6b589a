"""The Calc extension's engine (steamcell_sheet.engine, no LibreOffice) with a team server over
https:// and a pinned validation digest: the CA file from the options (ServerCaFile) or
STEAMCELL_CA_FILE, a certificate from an unknown CA refused with a message that says to set the
CA file, and ExpectDigest (or STEAMCELL_EXPECT_DIGEST) refusing a team server or the embedded
program whose digest differs, naming both digests. The headless-LibreOffice side of the same
options is in test_extension.py.

Certificates are made here with the openssl command. Check value: IAPWS R7-97(2012) Table 5,
p = 3 MPa, T = 300 K: h = 115.331273 kJ/kg.
"""

import os
import re
import subprocess
import sys
from pathlib import Path

import pytest

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "src" / "pythonpath"))
sys.path.insert(0, str(HERE.parents[1]))  # clients/, for testcerts

from steamcell_sheet.cells import CellError  # noqa: E402
from steamcell_sheet.engine import Engine, Settings  # noqa: E402
from testcerts import make_ca_and_cert, token_line  # noqa: E402

REPO = HERE.parents[2]
BIN = os.environ.get("STEAMCELL_BIN") or str(REPO / "target" / "debug" / "steamcell")
TOKEN = "calc-team-test-token-0123456789abcdef"
H_TABLE5 = 115.331273


@pytest.fixture(scope="module")
def team(tmp_path_factory):
    assert Path(BIN).is_file(), f"steamcell binary not found at {BIN}"
    d = tmp_path_factory.mktemp("calc-team")
    ca, cert, key = map(str, make_ca_and_cert(d, "plant"))
    other_ca = str(make_ca_and_cert(d, "elsewhere")[0])
    tokens = d / "tokens"
    tokens.write_text(token_line("calc", TOKEN) + "\n")
    proc = subprocess.Popen([BIN, "serve", "--listen", "127.0.0.1:0", "--tls-cert", cert,
                             "--tls-key", key, "--tokens-file", str(tokens)],
                            stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True)
    m = re.search(r"listening on (https://\S+)", proc.stdout.readline())
    assert m
    yield m.group(1), ca, other_ca
    proc.terminate()
    proc.wait(10)


def engine(options, env=None):
    e = Engine(Settings.resolve(options, env or {}))
    try:
        e.start()
    except BaseException:
        e.close()  # the Sheet does the same: a refused embedded program is stopped
        raise
    return e


def table5(e):
    return e.call("water.state", {"given": {"p": "3 MPa", "T": "300 K"}})["h"]


def test_https_team_server_with_a_ca_file(team):
    url, ca, _ = team
    e = engine({"ServerUrl": url, "ServerToken": TOKEN, "ServerCaFile": ca})
    try:
        assert abs(table5(e) - H_TABLE5) <= 0.5e-6
        assert e.describe() == f"team server {url}"
    finally:
        e.close()
    e = engine({"ServerUrl": url}, {"STEAMCELL_TOKEN": TOKEN, "STEAMCELL_CA_FILE": ca})
    try:
        assert abs(table5(e) - H_TABLE5) <= 0.5e-6
    finally:
        e.close()


def test_an_untrusted_certificate_says_to_set_the_ca_file(team):
    url, _, other_ca = team
    for options in ({"ServerUrl": url, "ServerToken": TOKEN, "ServerCaFile": other_ca},
                    {"ServerUrl": url, "ServerToken": TOKEN}):
        with pytest.raises(CellError) as e:
            engine(options)
        assert e.value.kind == "engine"
        assert "does not trust" in e.value.message and "CA file" in e.value.message
    with pytest.raises(CellError, match="does not exist"):
        engine({"ServerUrl": url, "ServerCaFile": "/nonexistent/ca.pem"})


def test_a_pinned_digest_refuses_another_engine(team):
    url, ca, _ = team
    e = engine({"ServerUrl": url, "ServerToken": TOKEN, "ServerCaFile": ca})
    digest = e.call("server.info", None)["digest"]
    e.close()
    wrong = "if97-0000000000000000-259of259"
    good = {"ServerUrl": url, "ServerToken": TOKEN, "ServerCaFile": ca}
    e = engine(dict(good, ExpectDigest=digest))
    assert abs(table5(e) - H_TABLE5) <= 0.5e-6
    e.close()
    for options, env in ((dict(good, ExpectDigest=wrong), {}),
                         (good, {"STEAMCELL_EXPECT_DIGEST": wrong}),
                         ({"EngineBinary": BIN, "ExpectDigest": wrong}, {})):
        with pytest.raises(CellError) as err:
            engine(options, env)
        assert err.value.kind == "engine"
        assert wrong in err.value.message and digest in err.value.message
    # The embedded program, pinned to its own digest.
    e = engine({"EngineBinary": BIN, "ExpectDigest": digest})
    try:
        assert abs(table5(e) - H_TABLE5) <= 0.5e-6
    finally:
        e.close()
