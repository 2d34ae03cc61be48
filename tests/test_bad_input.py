"""Bad designs and options found by an adversarial run (issue 15): each gives exactly one line
on stderr naming the key or option, exit code 2, no traceback, and writes nothing.

The reproductions are the designs and commands of the issue, run through ``cli.main``.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from chanmesh.cli import main
from design_text import arc_text


def one_line(capsys, argv: list[str], *expected: str) -> str:
    """Run the command line; assert exit 2, one stderr line containing every ``expected``."""
    code = _run(argv)
    err = capsys.readouterr().err
    assert code == 2, err
    assert "Traceback" not in err and len(err.strip().splitlines()) == 1, err
    for e in expected:
        assert e in err, err
    return err


def _run(argv: list[str]) -> int:
    """``main(argv)``; argparse's own errors exit through SystemExit, whose code we return."""
    try:
        return main(argv)
    except SystemExit as exc:
        return int(exc.code)


def design_file(tmp_path: Path, text: str) -> str:
    f = tmp_path / "d.toml"
    f.write_text(text)
    return str(f)


def arc(radius="1000", angle="90", extra_path="", mesh="cells_across = 4", extra="") -> str:
    return (f'name = "bad"\nunit = "um"\n[section]\nwidth = 100\nheight = 50\n'
            f'[path]\nkind = "arc"\nradius = {radius}\nangle = {angle}\n{extra_path}\n[mesh]\n{mesh}\n{extra}\n')


# --- item 2: every length finite -----------------------------------------------------------------

@pytest.mark.parametrize("text, key", [
    (arc(radius='"1e400um"'), "path.radius"),
    (arc(radius="1e400"), "path.radius"),
    (arc(extra='[fabrication]\nmould_margin = "1e400um"'), "fabrication.mould_margin"),
    (arc(extra='[flow]\nrate = "1e400mL/min"'), "flow.rate"),
    (arc(extra='[flow]\nparticles = ["1e400um"]'), "flow.particles[0]"),
    (arc(radius='"1e30m"'), "path.radius"),
])
@pytest.mark.parametrize("command", ["build", "numbers", "stations", "preview"])
def test_overflowing_lengths_are_refused(tmp_path, capsys, text, key, command):
    argv = [command, design_file(tmp_path, text)]
    if command in ("build", "preview"):
        argv += ["--out", str(tmp_path / "o")]
    one_line(capsys, argv, key)
    assert not (tmp_path / "o").exists()


@pytest.mark.parametrize("option", ["--port-diameter", "--mould-margin", "--base-thickness"])
def test_overflowing_length_options_are_refused(tmp_path, capsys, option):
    f = design_file(tmp_path, arc())
    one_line(capsys, ["build", f, option, "1e400mm", "--format", "dxf", "--out", str(tmp_path / "o")], option)
    assert not (tmp_path / "o").exists()


@pytest.mark.parametrize("argv, option", [
    (["family", "{f}", "--ratio", "nan"], "--ratio"),
    (["family", "{f}", "--ratio", "inf"], "--ratio"),
    (["numbers", "{f}", "--flow", "1mL/min", "--lift-coefficient", "1e400"], "--lift-coefficient"),
    (["numbers", "{f}", "--flow", "1e400mL/min"], "--flow"),
    (["numbers", "{f}", "--velocity", "nan m/s"], "--velocity"),
    (["numbers", "{f}", "--flow", "1mL/min", "--particles", "1e400um"], "--particles"),
    (["gci", "{f}", "--volume", "inf"], "--volume"),
    (["cut", "{f}", "--design", "{f}", "--at", "0.5", "--scale", "nan"], "--scale"),
])
def test_non_finite_numeric_options_are_refused(tmp_path, capsys, argv, option):
    f = design_file(tmp_path, arc())
    one_line(capsys, [a.replace("{f}", f) for a in argv], option)


# --- item 5: a first cell no growth ratio reaches -------------------------------------------------

@pytest.mark.parametrize("cells", ["tet", "hex"])
@pytest.mark.parametrize("first", ["0.001", "1e-9"])
def test_first_cell_needing_a_huge_growth_ratio(tmp_path, capsys, cells, first):
    text = arc(mesh=f'cells = "{cells}"\ncells_across = 12\nwall_ratio = 3.0\nfirst_cell = {first}')
    one_line(capsys, ["build", design_file(tmp_path, text), "--out", str(tmp_path / "o")], "mesh.first_cell")


def test_ratio_for_first_cell_never_leaks_a_root_finder_error():
    from chanmesh.errors import DesignError
    from chanmesh.sizing import first_cell, ratio_for_first_cell

    # round trip (inverse of the closed-form sum of the progression)
    g = ratio_for_first_cell(100e-6, 12, first_cell(100e-6, 12, 1.7))
    assert g == pytest.approx(1.7, rel=1e-9)
    with pytest.raises(DesignError, match="mesh.first_cell"):
        ratio_for_first_cell(100e-6, 12, 1e-15)


# --- item 6: deeply nested TOML, huge files -----------------------------------------------------

def test_deeply_nested_toml(tmp_path, capsys):
    text = "name = " + "[" * 100_000 + "]" * 100_000 + "\n"
    one_line(capsys, ["build", design_file(tmp_path, text)], "nested too deeply")


def test_huge_design_file_is_refused_before_parsing(tmp_path, capsys):
    sections = ", ".join(["0.5"] * 5_000_000)
    f = tmp_path / "d.toml"
    f.write_text(arc(mesh=f"cells_across = 4\nsections = [{sections}]"))
    one_line(capsys, ["build", str(f)], "larger than")


def test_too_many_sections_are_refused_early(tmp_path, capsys):
    sections = ", ".join(["0.5"] * 20_000)
    text = arc(mesh=f"cells_across = 4\nsections = [{sections}]")
    one_line(capsys, ["build", design_file(tmp_path, text)], "mesh.sections", "at most")


# --- item 15: a name is matched whole ------------------------------------------------------------

def test_name_ending_in_a_newline(tmp_path, capsys):
    text = arc().replace('name = "bad"', 'name = "evil\\n"')
    one_line(capsys, ["build", design_file(tmp_path, text), "--out", str(tmp_path / "o")], "name =")
    assert not (tmp_path / "o").exists()


# --- item 18: options ---------------------------------------------------------------------------

def test_empty_format_list(tmp_path, capsys):
    one_line(capsys, ["build", design_file(tmp_path, arc()), "--format", "", "--out", str(tmp_path / "o")], "--format")
    assert not (tmp_path / "o").exists()


def test_negative_option_value_gets_one_line(tmp_path, capsys):
    one_line(capsys, ["build", design_file(tmp_path, arc()), "--port-diameter", "-1mm"], "--port-diameter", "'='")


def test_argparse_errors_are_one_line(tmp_path, capsys):
    one_line(capsys, ["build"], "required")
    one_line(capsys, ["nosuchcommand"], "invalid choice")
    one_line(capsys, ["family", design_file(tmp_path, arc()), "--levels", "three"], "--levels")
