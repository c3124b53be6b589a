"""The example notebook (examples/notebooks/imaginary-falls-mill.ipynb) executed end to end
with nbconvert, as CI runs it: every chart cell's saved output holds a PNG image (no
`%matplotlib` magic in the notebook), each image is written out as a file."""

import base64
import json
import subprocess
import sys

import pytest

from conftest import REPO

pytest.importorskip("nbconvert")
pytest.importorskip("ipykernel")

NOTEBOOK = REPO / "examples" / "notebooks" / "imaginary-falls-mill.ipynb"
CHARTS = ("steamcell.plot.hs(", "steamcell.plot.ts(", "balance.plot_energy_flows(",
          "balance.plot_sweep(")


def test_the_example_notebook_runs_and_shows_every_chart(tmp_path):
    code = [("".join(c["source"])) for c in json.loads(NOTEBOOK.read_text())["cells"]
            if c["cell_type"] == "code"]
    assert not any("%matplotlib" in t or "pyplot" in t for t in code)
    out = subprocess.run([sys.executable, "-m", "nbconvert", "--to", "notebook", "--execute",
                          "--ExecutePreprocessor.timeout=300", str(NOTEBOOK), "--output-dir",
                          str(tmp_path), "--output", "executed"], capture_output=True, text=True,
                         timeout=600)
    assert out.returncode == 0, out.stderr[-3000:]
    nb = json.loads((tmp_path / "executed.ipynb").read_text())
    images = 0
    for cell in nb["cells"]:
        if cell["cell_type"] != "code":
            continue
        text = "".join(cell["source"])
        outputs = cell.get("outputs", [])
        assert not any(o["output_type"] == "error" for o in outputs), text
        pngs = [o["data"]["image/png"] for o in outputs if "image/png" in o.get("data", {})]
        if any(ch in text for ch in CHARTS):
            assert len(pngs) == 1, f"no image for: {text}"
        for b64 in pngs:
            data = base64.b64decode(b64)
            assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 10_000
            images += 1
            (tmp_path / f"chart-{images}.png").write_bytes(data)
        for o in outputs:
            assert "<Figure size" not in "".join(o.get("data", {}).get("text/plain", "")), text
    assert images == 5
