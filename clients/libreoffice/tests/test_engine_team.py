"""The Calc extension's engine (steamcell_sheet.engine, no LibreOffice) with a team server over
https:// and a pinned validation digest: the CA file from the options (ServerCaFile) or
STEAMCELL_CA_FILE, a certificate from an unknown CA refused with a message that says to set the
CA file, and ExpectDigest (or STEAMCELL_EXPECT_DIGEST) refusing a team server or the embedded
program whose digest differs, naming both digests. The headless-LibreOffice side of the same
options is in test_extension.py.

Certificates are made here with the openssl command. Check value: IAPWS R7-97(2012) Table 5,
p = 3 MPa, T = 300 K: h = 115.331273 kJ/kg.
"""

import hashlib
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "src" / "pythonpath"))

from steamcell_sheet.cells import CellError  # noqa: E402
from steamcell_sheet.engine import Engine, Settings  # noqa: E402

REPO = HERE.parents[2]
BIN = os.environ.get("STEAMCELL_BIN") or str(REPO / "target" / "debug" / "steamcell")
TOKEN = "calc-team-test-token-0123456789abcdef"
H_TABLE5 = 115.331273


def _openssl(*args, cwd):
    subprocess.run(["openssl", *args], cwd=cwd, check=True, capture_output=True)


def make_ca_and_cert(d: Path, name: str):
    assert shutil.which("openssl"), "the openssl command is needed (clients/run-tests.sh installs it)"
    _openssl("req", "-x509", "-newkey", "ec", "-pkeyopt", "ec_paramgen_curve:prime256v1",
             "-nodes", "-days", "2", "-subj", f"/CN={name} test CA",
             "-addext", "basicConstraints=critical,CA:TRUE",
             "-addext", "keyUsage=critical,keyCertSign,cRLSign",
             "-keyout", f"{name}-ca-key.pem", "-out", f"{name}-ca.pem", cwd=d)
    _openssl("req", "-newkey", "ec", "-pkeyopt", "ec_paramgen_curve:prime256v1", "-nodes",
             "-subj", "/CN=steamcell test server", "-keyout", f"{name}-key.pem",
             "-out", f"{name}.csr", cwd=d)
    (d / f"{name}.ext").write_text(
        "subjectAltName=IP:127.0.0.1,DNS:localhost\nbasicConstraints=CA:FALSE\n"
        "keyUsage=digitalSignature\nextendedKeyUsage=serverAuth\n")
    _openssl("x509", "-req", "-in", f"{name}.csr", "-CA", f"{name}-ca.pem",
             "-CAkey", f"{name}-ca-key.pem", "-CAcreateserial", "-days", "2",
             "-extfile", f"{name}.ext", "-out", f"{name}-cert.pem", cwd=d)
    return str(d / f"{name}-ca.pem"), str(d / f"{name}-cert.pem"), str(d / f"{name}-key.pem")


@pytest.fixture(scope="module")
def team(tmp_path_factory):
    assert Path(BIN).is_file(), f"steamcell binary not found at {BIN}"
    d = tmp_path_factory.mktemp("calc-team")
    ca, cert, key = make_ca_and_cert(d, "plant")
    other_ca, _, _ = make_ca_and_cert(d, "elsewhere")
    tokens = d / "tokens"
    tokens.write_text(f"calc sha256:{hashlib.sha256(TOKEN.encode()).hexdigest()}\n")
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
