"""``chanmesh gci``: files written, exit codes, and one-line errors for bad study tables."""

from __future__ import annotations

import csv
import json
from pathlib import Path

import numpy as np
import pytest

from chanmesh.cli import main


@pytest.fixture(autouse=True)
def _in_tmp(tmp_path, monkeypatch):  # noqa: ANN001, ANN202
    """The default output folder is out/gci under the working folder: keep it in tmp_path."""
    monkeypatch.chdir(tmp_path)


def write(path: Path, text: str) -> Path:
    path.write_text(text, encoding="utf-8")
    return path


# Celik et al. (2008), J. Fluids Eng. 130(7) 078001, Table 1, columns 1 and 3 (2D, h = (1/N)^(1/2)).
CELIK = """level,cells,reattachment,oscillating
1,18000,6.063,6.0042
2,8000,5.972,5.9624
3,4500,5.863,6.0909
"""


def test_celik_study_writes_every_output(tmp_path, capsys):
    csv_path = write(tmp_path / "RESULTS.csv", CELIK)
    assert main(["gci", str(csv_path), "--dim", "2"]) == 0
    shown = capsys.readouterr().out
    assert "apparent order p" in shown and "1.534" in shown
    data = json.loads((tmp_path / "out" / "gci" / "gci.json").read_text())
    first = data["quantities"][0]["triples"][0]
    # Celik et al. (2008) Table 1, column 1: p = 1.53, phi_ext = 6.1685, GCI_fine = 2.2 %.
    assert first["p"] == pytest.approx(1.53, abs=5e-3)
    assert first["phi_ext21"] == pytest.approx(6.1685, abs=5e-5)
    assert 100 * first["gci_fine"] == pytest.approx(2.2, abs=0.05)
    rows = list(csv.DictReader((tmp_path / "out" / "gci" / "gci.csv").open()))
    assert [r["quantity"] for r in rows] == ["reattachment", "oscillating"]
    assert rows[1]["s"] == "-1" and "oscillatory" in rows[1]["flags"]
    for name in ("reattachment", "oscillating"):
        png = tmp_path / "out" / "gci" / f"gci-{name}.png"
        assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    leftovers = [p.name for p in tmp_path.iterdir() if p.name.endswith(".part")]
    assert leftovers == []


def test_png_is_not_blank(tmp_path):
    import matplotlib.image as mpimg

    csv_path = write(tmp_path / "RESULTS.csv", CELIK)
    assert main(["gci", str(csv_path), "--dim", "2", "--out", str(tmp_path / "report")]) == 0
    img = mpimg.imread(tmp_path / "report" / "gci-reattachment.png")[..., :3]
    assert img.shape[0] > 200 and img.shape[1] > 300
    # A blank canvas is one colour; the plot has white background, dark text and red/blue marks.
    assert img.std() > 0.05
    assert (img.mean(axis=2) < 0.5).mean() > 0.005  # dark pixels (axes, text, points)
    red = (img[..., 0] > 0.6) & (img[..., 1] < 0.4) & (img[..., 2] < 0.4)
    assert red.sum() > 50  # the extrapolated-value star and the GCI bar


def test_family_json_supplies_h_and_five_levels_fit(tmp_path, capsys):
    """Manufactured phi = phi0 + C h^p (analytic) with h from a family.json; the report's
    least-squares order must come back to 1e-10."""
    h = [2.0e-6, 2.8e-6, 4.0e-6, 5.6e-6, 8.0e-6]
    phi = [10.0 + 3.0 * (x / 1e-6) ** 1.8 for x in h]
    family = tmp_path / "study"
    family.mkdir()
    levels = [{"level": i + 1, "cells": int(1e6 / (i + 1) ** 3), "h": x, "path": f"level-{i + 1}"}
              for i, x in enumerate(h)]
    (family / "family.json").write_text(json.dumps({"levels": levels}))
    rows = "".join(f"{i + 1},{v!r}\n" for i, v in enumerate(phi))
    csv_path = write(tmp_path / "RESULTS.csv", "level,dp\n" + rows)
    assert main(["gci", str(csv_path), "--family", str(family)]) == 0
    data = json.loads((family / "gci.json").read_text())  # written beside family.json
    fit = data["quantities"][0]["fit"]
    assert abs(fit["p"] - 1.8) < 1e-10 and abs(fit["phi0"] - 10.0) < 1e-10
    assert len(data["quantities"][0]["triples"]) == 3
    assert "least squares over 5 levels" in capsys.readouterr().out


def test_volume_gives_metres(tmp_path):
    csv_path = write(tmp_path / "RESULTS.csv", "level,cells,q\n1,8000,1.0\n2,1000,1.1\n3,125,1.5\n")
    assert main(["gci", str(csv_path), "--volume", "8e-9"]) == 0
    data = json.loads((tmp_path / "out" / "gci" / "gci.json").read_text())
    assert data["h"] == pytest.approx([1e-4, 2e-4, 4e-4], rel=1e-12)  # (V/N)^(1/3)


def test_two_levels_give_two_grid_gci(tmp_path, capsys):
    csv_path = write(tmp_path / "RESULTS.csv", "level,h,q\n1,1.0,1.01\n2,2.0,1.04\n")
    assert main(["gci", str(csv_path)]) == 0
    out = capsys.readouterr().out
    assert "(3)" in out and "cannot be estimated" in out
    rows = list(csv.DictReader((tmp_path / "out" / "gci" / "gci.csv").open()))
    assert rows[0]["kind"] == "two-grid" and float(rows[0]["safety_factor"]) == 3.0


def test_converged_column_is_reported(tmp_path, capsys):
    csv_path = write(tmp_path / "RESULTS.csv", "level,h,flat\n1,1,2.5\n2,2,2.5\n3,4,2.5\n")
    assert main(["gci", str(csv_path)]) == 0
    assert "round-off" in capsys.readouterr().out


@pytest.mark.parametrize(
    "text, expected",
    [
        ("level,h,q\n1,1.0,1.0\n2,3.0,1.1\n3,2.0,1.3\n", "h must grow with level"),
        ("level,h,q\n1,1.0,1.0\n2,2.0,abc\n3,4.0,1.3\n", "row 3, column 'q' = 'abc': must be a number"),
        ("level,h,q\n1,1.0,1.0\n2,2.0,\n3,4.0,1.3\n", "row 3, column 'q'"),
        ("level,q\n1,1.0\n2,1.1\n3,1.3\n", "needs a 'cells' or 'h' column"),
        ("h,q\n1.0,1.0\n2.0,1.1\n", "needs a 'level' column"),
        ("level,h\n1,1.0\n2,2.0\n", "at least one quantity column"),
        ("level,h,q\n1,1.0,1.0\n", "at least two levels"),
        ("level,h,q\n1,1.0,1.0\n1,2.0,1.1\n", "each level may appear only once"),
        ("level,h,q\n1,1.0,1.0\n2,2.0\n", "must have 3 like the header"),
        ("level,h,q,q\n1,1.0,1.0,1\n2,2.0,1.1,1\n", "unique"),
        ("level,h,q\n1,1.0,nan\n2,2.0,1.1\n", "finite"),
    ],
)
def test_bad_tables_are_one_line_errors(tmp_path, capsys, text, expected):
    csv_path = write(tmp_path / "RESULTS.csv", text)
    assert main(["gci", str(csv_path)]) == 2
    err = capsys.readouterr().err
    assert expected in err and "Traceback" not in err and err.count("\n") == 1
    assert not (tmp_path / "out" / "gci" / "gci.json").exists() and not (tmp_path / "out" / "gci" / "gci.csv").exists()


def test_bad_options_and_family(tmp_path, capsys):
    csv_path = write(tmp_path / "RESULTS.csv", "level,cells,q\n1,8000,1.0\n2,1000,1.1\n3,125,1.5\n")
    assert main(["gci", str(csv_path), "--area", "1e-6"]) == 2
    assert "--dim 2" in capsys.readouterr().err
    assert main(["gci", str(tmp_path / "missing.csv")]) == 2
    assert "cannot read" in capsys.readouterr().err
    assert main(["gci", str(csv_path), "--family", str(tmp_path)]) == 2
    assert "family.json" in capsys.readouterr().err
    (tmp_path / "family.json").write_text(json.dumps({"levels": [{"level": 1, "h": 1e-6, "cells": 8000},
                                                                 {"level": 2, "h": 2e-6, "cells": 999}]}))
    assert main(["gci", str(csv_path), "--family", str(tmp_path)]) == 2
    assert "must match family.json level 2" in capsys.readouterr().err
    (tmp_path / "family.json").write_text(json.dumps({"levels": [{"level": 1, "h": 1e-6}, {"level": 2, "h": 2e-6}]}))
    assert main(["gci", str(csv_path), "--family", str(tmp_path)]) == 2
    assert "row 4, column 'level' = 3: is not in" in capsys.readouterr().err


def test_divergent_column_is_flagged_not_fatal(tmp_path):
    h = np.array([1.0, 2.0, 4.0])
    csv_path = write(tmp_path / "RESULTS.csv", "level,h,q\n" + "".join(
        f"{i + 1},{x},{v}\n" for i, (x, v) in enumerate(zip(h, (1.0, 1.3, 1.4)))))
    assert main(["gci", str(csv_path)]) == 0
    rows = list(csv.DictReader((tmp_path / "out" / "gci" / "gci.csv").open()))
    assert rows[0]["convergence"] == "divergent" and rows[0]["gci_fine"] == ""


def test_plot_shows_h_in_micrometres_and_is_readable(tmp_path):
    """Issue 15 item 20: h in µm on the x axis (values converted from metres), a picture at least
    900 px wide with no text below 11 pt (common practice, no source), the quantity in the title."""
    from matplotlib.text import Text

    from chanmesh.post.gci import gci_study
    from chanmesh.post.gci_io import gci_figure
    from chanmesh.post.gci_table import load_study

    csv_path = write(tmp_path / "RESULTS.csv", "level,cells,q\n1,8000,1.0\n2,1000,1.1\n3,125,1.5\n")
    table = load_study(csv_path, dim=3, extent=8e-9)
    fig = gci_figure(gci_study(table)[0], table)
    ax = fig.axes[0]
    assert "µm" in ax.get_xlabel()
    # (V/N)^(1/3) = (8e-9 m^3 / 8000)^(1/3) = 1e-4 m = 100 µm; 1000 -> 200 µm; 125 -> 400 µm (arithmetic)
    assert ax.lines[0].get_xdata() == pytest.approx([100.0, 200.0, 400.0], rel=1e-12)
    fig.canvas.draw()
    ticks = [t.get_position()[0] for t in ax.get_xticklabels() if t.get_text()]
    assert max(ticks) >= 400.0 and min(ticks) <= 0.0  # ticks span 0 .. 400 µm, not 0 .. 4e-4 m
    width, height = fig.get_size_inches() * fig.dpi
    assert width >= 900 and height >= 500
    sizes = [t.get_fontsize() for t in fig.findobj(Text) if t.get_text()]
    assert sizes and min(sizes) >= 11
    assert "q" in ax.get_title()
    # the file written by the command has that size too
    assert main(["gci", str(csv_path), "--volume", "8e-9", "--out", str(tmp_path / "o")]) == 0
    from PIL import Image

    assert Image.open(tmp_path / "o" / "gci-q.png").size[0] >= 900
    # without a volume, h is relative: the label says so instead of claiming a unit
    rel = load_study(csv_path, dim=3)
    assert "no unit" in gci_figure(gci_study(rel)[0], rel).axes[0].get_xlabel()
