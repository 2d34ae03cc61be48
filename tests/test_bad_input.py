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


# --- item 1: a channel that runs into itself -------------------------------------------------------

SECTION_100x50 = 'name = "touch"\nunit = "um"\n[section]\nwidth = 100\nheight = 50\n[path]\n'


@pytest.mark.parametrize("path, keys", [
    # the reproductions (100 x 50 um section)
    ('kind = "arc"\nradius = 300\nangle = 340\ninlet_length = 300', ["path.inlet_length", "path.angle"]),
    ('kind = "arc"\nradius = 300\nangle = 270\ninlet_length = 600\noutlet_length = 600',
     ["path.outlet_length", "path.inlet_length"]),
    ('kind = "spiral"\ninner_radius = 300\npitch = 150\nturns = 1.5\ninlet_length = 600', ["path.inlet_length", "path.turns"]),
])
def test_leads_that_run_into_the_channel_are_refused(tmp_path, capsys, path, keys):
    one_line(capsys, ["build", design_file(tmp_path, SECTION_100x50 + path), "--out", str(tmp_path / "o")],
             *keys, "runs into itself")
    assert not (tmp_path / "o").exists()


def test_lead_crossing_is_plain_geometry():
    # outside check of the first reproduction, by hand: the inlet lead is the segment x = 300,
    # y in [-300, 0]; the arc ends at 340 deg, at (300 cos 340, 300 sin 340) = (281.9, -102.6),
    # heading along (-sin 340, cos 340); its centreline reaches x = 300 within the lead's span,
    # so the two centrelines (and so the walls) cross.
    import math

    end = (300 * math.cos(math.radians(340)), 300 * math.sin(math.radians(340)))
    assert 300 - end[0] < 50 and -300 < end[1] < 0  # the arc's end lies inside the lead's band


@pytest.mark.parametrize("path", [
    # tight but valid: walls of neighbouring runs at least 5 % of the width apart
    'kind = "spiral"\ninner_radius = 100\npitch = 110\nturns = 5',
    'kind = "spiral"\ninner_radius = 300\npitch = 150\nturns = 1.5',
    'kind = "arc"\nradius = 51\nangle = 359',
    'kind = "arc"\nradius = 80\nangle = 300\ninlet_length = 50',
    'kind = "serpentine"\nradius = 52.5\nstraight = 500\nperiods = 3\ninlet_length = 300\noutlet_length = 300',
])
def test_tight_valid_designs_are_accepted(path):
    from chanmesh.design.load import loads_design

    loads_design(SECTION_100x50 + path)


def test_wall_test_measures_the_gap():
    # two parallel straight runs joined by a U-turn of radius R: the walls are 2 R - w apart
    # (plane geometry); 4.5 % of the width passes, 3 % is refused
    from chanmesh.design.model import ArcPiece, LinePiece
    from chanmesh.geometry.centerline import lay_out
    from chanmesh.geometry.clearance import wall_contact

    w = 100.0
    for radius, expected in ((52.25, None), (51.5, 3.0)):
        line = lay_out([LinePiece(800), ArcPiece(radius, 180), LinePiece(800)])
        hit = wall_contact(line, w, 4.0)
        if expected is None:
            assert hit is None
        else:
            assert hit is not None and hit.distance == pytest.approx(expected, abs=0.01)


# --- item 3: features below the geometry kernel's tolerance ---------------------------------------

@pytest.mark.parametrize("path, extra, key", [
    ('kind = "arc"\nradius = 300\nangle = 90', '[outlets]\nsplit = [1e-9, 0.999999999]', "outlets.split[0]"),
    ('kind = "arc"\nradius = 300\nangle = 1e-6', "", "path.angle"),
    ('kind = "spiral"\ninner_radius = 300\npitch = 150\nturns = 1e-7', "", "path.turns"),
    ('kind = "arc"\nradius = 300\nangle = 90\ninlet_length = 0.00001', "", "path.inlet_length"),
    ('kind = "serpentine"\nradius = 300\nstraight = 1e-6\nperiods = 2', "", "path.straight"),
    ('kind = "chambers"\ncount = 2\nchamber_length = 300\nchamber_width = 100.0001\nthroat_length = 200', "",
     "path.chamber_width"),
    ('kind = "serpentine"\nradius = 60\nstraight = "10m"\nperiods = 200', "", "path.straight"),
])
def test_features_below_the_kernel_tolerance_are_refused(tmp_path, capsys, path, extra, key):
    text = SECTION_100x50 + path + "\n[mesh]\ncells = \"tet\"\n" + extra + "\n"
    one_line(capsys, ["build", design_file(tmp_path, text), "--out", str(tmp_path / "o")], key)


def test_zero_leads_stay_allowed():
    from chanmesh.design.load import loads_design

    loads_design(SECTION_100x50 + 'kind = "arc"\nradius = 300\nangle = 90\ninlet_length = 0\noutlet_length = 1')


def test_quality_of_a_folder_says_it_is_a_folder(capsys, tmp_path):
    one_line(capsys, ["quality", str(tmp_path)], "is a folder")


def test_json_under_a_file_says_it_is_a_file(capsys, tmp_path):
    design = tmp_path / "d.toml"
    design.write_text(arc_text("d"))
    one_line(capsys, ["numbers", str(design), "--flow", "1mL/min", "--json", str(design / "x.json")],
             "is a file, not a folder")


def test_numbers_without_a_flow_names_the_options(capsys, tmp_path):
    design = tmp_path / "d.toml"
    design.write_text(arc_text("d"))
    one_line(capsys, ["numbers", str(design), "--no-section-flow"], "flow.rate", "--flow", "--velocity")


def test_a_study_with_thousands_of_columns_is_refused_at_once(capsys, tmp_path):
    table = tmp_path / "r.csv"
    names = [f"q{i}" for i in range(2000)]
    rows = ["level," + ",".join(names)] + [f"{lv}," + ",".join(["1.0"] * 2000) for lv in (1, 2, 3)]
    table.write_text("\n".join(rows) + "\n")
    one_line(capsys, ["gci", str(table), "--out", str(tmp_path / "g")], "2001 columns", "at most 100")
    assert not (tmp_path / "g").exists()
