"""Test helpers shared by the clients' team-server tests (Python package and Calc extension):
a private CA with a server certificate for 127.0.0.1 and localhost, made with the openssl
command, and a tokens-file line. Not part of any client package; tests put this folder on
sys.path.
"""

import hashlib
import shutil
import subprocess
from pathlib import Path


def _openssl(*args, cwd):
    subprocess.run(["openssl", *args], cwd=cwd, check=True, capture_output=True)


def make_ca_and_cert(d: Path, name: str):
    """A CA (name-ca.pem) and a server certificate signed by it (name-cert.pem, name-key.pem)."""
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
    return d / f"{name}-ca.pem", d / f"{name}-cert.pem", d / f"{name}-key.pem"


def token_line(name: str, token: str, options: str = "") -> str:
    """A tokens-file line: the name, the token's SHA-256 hash, the options."""
    return f"{name} sha256:{hashlib.sha256(token.encode()).hexdigest()} {options}".rstrip()
