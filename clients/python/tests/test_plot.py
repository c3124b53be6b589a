"""Charts: T-s and h-s with the dome, isobars and a process, saved to PNG (Agg backend)."""

import struct

import matplotlib

matplotlib.use("Agg")

import steamcell.plot  # noqa: E402


def png_size(path):
    with open(path, "rb") as f:
        head = f.read(24)
    assert head[:8] == b"\x89PNG\r\n\x1a\n"
    return struct.unpack(">II", head[16:24])


def turbine(client):
    return client.turbine_expand(inlet={"p": "42 barg", "T": "410 degC", "flow": "20 t/h"},
                                 outlet_p="4 barg", efficiency=0.72)


def test_ts_png(client, tmp_path):
    fig = steamcell.plot.ts(client, processes=[("back-pressure turbine", turbine(client))],
                            figsize=(8, 6), dpi=100)
    path = tmp_path / "ts.png"
    fig.savefig(path, dpi=100)
    assert png_size(path) == (800, 600)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "s [kJ/(kg K)]"
    assert ax.get_ylabel().startswith("T [") and "C" in ax.get_ylabel()
    # dome (2 series) + at least one isobar + process and its isentropic path
    assert len(ax.lines) >= 5
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert "back-pressure turbine" in labels and "back-pressure turbine (isentropic)" in labels


def test_hs_png(client, tmp_path):
    fig = steamcell.plot.hs(client, processes=[turbine(client)], isobars=[0.5, 4.3], figsize=(6, 4),
                            dpi=120)
    path = tmp_path / "hs.png"
    fig.savefig(path, dpi=120)
    assert png_size(path) == (720, 480)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "s [kJ/(kg K)]" and ax.get_ylabel() == "h [kJ/kg]"
