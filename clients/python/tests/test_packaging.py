"""Packaging as the README documents it: installing the client from the checkout leaves no
build/ or egg-info in the checkout, and the installed package finds the checkout's
target/*/steamcell from any working directory (pip records the checkout in direct_url.json)."""

import os
import subprocess
import sys

from conftest import REPO


def test_install_leaves_no_build_files_and_finds_the_checkout_binary(tmp_path):
    site = tmp_path / "site"
    pkg = REPO / "clients" / "python"
    before = {p.name for p in pkg.iterdir()} | {p.name for p in (pkg / "src").iterdir()}
    out = subprocess.run([sys.executable, "-m", "pip", "install", "-q", "--no-deps",
                          "--target", str(site), str(pkg)], capture_output=True, text=True,
                         timeout=600)
    assert out.returncode == 0, out.stderr[-2000:]
    after = {p.name for p in pkg.iterdir()} | {p.name for p in (pkg / "src").iterdir()}
    new = {n for n in after - before if n != "__pycache__"}
    assert not new, f"the install wrote into the checkout: {new}"
    assert not (pkg / "build").exists() and not list(pkg.glob("**/*.egg-info"))
    # from a directory outside the checkout, without STEAMCELL_BIN and without steamcell on PATH
    env = {k: v for k, v in os.environ.items() if k != "STEAMCELL_BIN"}
    env["PATH"] = os.pathsep.join(p for p in env.get("PATH", "").split(os.pathsep)
                                  if not os.path.exists(os.path.join(p, "steamcell")))
    env["PYTHONPATH"] = str(site)
    code = ("import steamcell, steamcell.transport as t; print(steamcell.__file__); "
            "print(t.find_binary())")
    out = subprocess.run([sys.executable, "-c", code], cwd=tmp_path, env=env,
                         capture_output=True, text=True, timeout=60)
    assert out.returncode == 0, out.stderr[-2000:]
    installed, found = out.stdout.split()
    assert installed.startswith(str(site))
    assert found in {str(REPO / "target" / p / "steamcell") for p in ("release", "debug")}
