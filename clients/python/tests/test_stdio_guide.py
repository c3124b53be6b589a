"""Runs the shell examples of clients/stdio.md (blocks after a '<!-- tested: NAME -->' line)."""

import json
import os
import re
import subprocess
from pathlib import Path

import pytest

from conftest import REPO, tol

GUIDE = REPO / "clients" / "stdio.md"


def blocks():
    text = GUIDE.read_text(encoding="utf-8")
    found = re.findall(r"<!-- tested: (\w+) -->\s*```(?:sh|bash)\n(.*?)```", text, re.S)
    assert len(found) == 2, "the guide's two tested shell blocks are missing"
    return found


@pytest.mark.parametrize("name,script", blocks())
def test_guide_shell_block(binary, name, script):
    env = dict(os.environ)
    env["PATH"] = str(Path(binary).resolve().parent) + os.pathsep + env.get("PATH", "")
    out = subprocess.run(["bash", "-c", script], capture_output=True, text=True, timeout=60, env=env)
    assert out.returncode == 0, out.stderr
    answers = [json.loads(line) for line in out.stdout.splitlines() if line.strip()]
    assert answers and all("result" in a for a in answers), out.stdout
    first = answers[0]["result"]
    # IAPWS R7-97(2012) Table 5: T = 300 K, p = 3 MPa: h = 0.115331273e3 kJ/kg
    assert first["h"] == pytest.approx(115.331273, abs=tol(115.331273, 9))
    if name == "heredoc":
        assert [a["id"] for a in answers] == [1, 2]
        assert answers[1]["result"]["T"] > 100  # saturation at 4 barg is above 100 degC
    else:
        assert [a["id"] for a in answers] == [300, 350, 400]
        hs = [a["result"]["h"] for a in answers]
        assert hs == sorted(hs) and hs[0] < hs[-1]


def test_guide_r_block(binary, client):
    """The guide's R example (jsonlite and system2 over `steamcell stdio`) gives the numbers the
    server gives for the same two calls. clients/run-tests.sh installs Debian's r-base-core
    and r-cran-jsonlite; without Rscript this test is skipped."""
    import shutil
    if shutil.which("Rscript") is None:
        pytest.skip("Rscript is not installed (clients/run-tests.sh installs it)")
    text = GUIDE.read_text(encoding="utf-8")
    found = re.findall(r"```r\n(.*?)```", text, re.S)
    assert len(found) == 1, "the guide's R block is missing"
    script = found[0] + (
        '\ncat(sprintf("%.17g\\n%.17g\\n", answers[[1]]$result$h, answers[[2]]$result$outlet$T))\n')
    env = dict(os.environ)
    env["PATH"] = str(Path(binary).resolve().parent) + os.pathsep + env.get("PATH", "")
    out = subprocess.run(["Rscript", "-"], input=script, capture_output=True, text=True,
                         timeout=120, env=env)
    assert out.returncode == 0, out.stderr
    h, t_out = [float(x) for x in out.stdout.split()[-2:]]
    want_h = client.call_raw("water.state", {"given": {"p": "42 barg", "T": "410 degC"}})["h"]
    want_t = client.call_raw("valve.throttle", {"inlet": {"p": "42 barg", "T": "410 degC"},
                                                "outlet_p": "4 barg"})["outlet"]["T"]
    assert h == pytest.approx(want_h, rel=1e-14) and t_out == pytest.approx(want_t, rel=1e-14)
