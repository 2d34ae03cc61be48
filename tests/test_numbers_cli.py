"""The ``chanmesh numbers`` command: output, JSON file, overrides and bad input (exit 2)."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from chanmesh.cli import main

DESIGN = """name = "cli-spiral"
unit = "um"
[section]
width = 500
height = 100
[path]
kind = "spiral"
inner_radius = 3000
pitch = 700
turns = 2
[flow]
rate = "1.2mL/min"
particles = ["15um"]
"""


@pytest.fixture
def design(tmp_path: Path) -> Path:
    p = tmp_path / "d.toml"
    p.write_text(DESIGN)
    return p


def test_prints_and_writes_json(design: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    out = tmp_path / "n.json"
    assert main(["numbers", str(design), "--json", str(out)]) == 0
    text = capsys.readouterr().out
    assert "Reynolds" in text and "turn 2" in text and "psi" in text and "fabricator" in text
    data = json.loads(out.read_text())
    assert data["flow"]["rate_m3_s"] == pytest.approx(1.2e-6 / 60)
    assert not [p for p in tmp_path.iterdir() if p.suffix == ".tmp"]  # temp file renamed away


def test_options_override_the_design(design: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    out = tmp_path / "n.json"
    args = ["numbers", str(design), "--velocity", "0.2m/s", "--temperature", "37C", "--particles", "7um,10um", "--json", str(out)]
    assert main(args) == 0
    data = json.loads(out.read_text())
    assert data["flow"]["mean_velocity_m_s"] == pytest.approx(0.2)
    assert data["fluid"]["temperature_K"] == pytest.approx(310.15)
    assert data["fluid"]["density_kg_m3"] == pytest.approx(993.330, abs=5e-4)  # iapws, as in issue 5
    assert [p["diameter_m"] for p in data["particles"]] == pytest.approx([7e-6, 10e-6])
    main(["numbers", str(design), "--fluid", "cell suspension", "--density", "1.02g/mL", "--viscosity", "1.2cP"])
    text = capsys.readouterr().out
    assert "biosafety" in text and "Newtonian" in text


@pytest.mark.parametrize(
    "extra, message",
    [
        (["--flow", "1.2"], "needs a unit, one of"),
        (["--flow", "1.2gal/min"], "mL/min"),
        (["--flow", "0mL/min"], "greater than 0"),
        (["--flow=-1mL/min"], "greater than 0"),  # "=" keeps argparse from reading an option
        (["--velocity", "0m/s"], "greater than 0"),
        (["--temperature", "120C"], "0 to 100 C"),
        (["--particles", "120um"], "smaller than the channel height"),
        (["--viscosity", "1furlong"], "unknown unit"),
    ],
)
def test_bad_input_is_one_line_and_exit_2(design: Path, capsys: pytest.CaptureFixture[str], extra: list[str], message: str) -> None:
    assert main(["numbers", str(design), *extra]) == 2
    err = capsys.readouterr().err
    assert message in err and err.count("\n") == 1 and "Traceback" not in err


def test_missing_json_folder_is_exit_2(design: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["numbers", str(design), "--json", str(tmp_path / "nope" / "n.json")]) == 2
    assert "does not exist" in capsys.readouterr().err
