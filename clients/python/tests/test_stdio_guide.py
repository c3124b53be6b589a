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
