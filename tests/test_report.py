"""report.html: written by every build, self-contained, and rendered by a real browser.

The browser check uses headless Chromium (Debian's ``chromium`` package; the test skips with
the reason when it is not installed): a screenshot must not be blank, no console message may
appear (the page has no script of its own, so any message is an error), and every image must
have decoded (``naturalWidth > 0``), read from the DOM after load by a probe script added to a
copy of the page.
"""

from __future__ import annotations

import base64
import io
import re
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest
from PIL import Image

from chanmesh.build import build
from chanmesh.design import loads_design
from chanmesh.report import REPORT, report_html

DESIGN = """
name = "rep-arc"
unit = "um"
[section]
width = 150
height = 60
[path]
kind = "arc"
radius = 1200
angle = 150
inlet_length = 300
[mesh]
cells_across = 4
[flow]
rate = "100uL/min"
temperature = "22degC"
particles = ["10um"]
"""

CHROMIUM = shutil.which("chromium") or ("/usr/bin/chromium" if Path("/usr/bin/chromium").exists() else None)
needs_chromium = pytest.mark.skipif(CHROMIUM is None, reason="headless Chromium is not installed (apt-get install -y chromium)")

PROBE = """<script>
window.addEventListener("load", function () {
  var imgs = Array.from(document.images);
  var ok = imgs.filter(function (i) { return i.complete && i.naturalWidth > 0; }).length;
  document.body.setAttribute("data-images", ok + "/" + imgs.length);
});
</script>"""


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    out = tmp_path_factory.mktemp("report")
    return build(loads_design(DESIGN), out, formats=("msh",))


def _chromium(*args: str) -> subprocess.CompletedProcess:
    cmd = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--hide-scrollbars", "--enable-logging=stderr", "--v=0", *args]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=120)


def test_every_build_writes_the_report_and_lists_it(built):
    page = built.folder / REPORT
    assert page.is_file()
    entry = [e for e in built.manifest["files"] if e["name"] == REPORT]
    assert entry and entry[0]["bytes"] == page.stat().st_size


def test_report_is_self_contained(built):
    text = (built.folder / REPORT).read_text(encoding="utf-8")
    assert "<script" not in text
    assert not re.search(r'(src|href)="(?!data:)', text)  # nothing fetched from anywhere
    images = re.findall(r'<img src="data:image/png;base64,([A-Za-z0-9+/=]+)"', text)
    assert len(images) == 7  # plan view, 3D view, three quality histograms, section mesh, section flows
    for k, data in enumerate(images):
        img = Image.open(io.BytesIO(base64.b64decode(data)))
        assert img.format == "PNG" and img.size[0] >= (800 if k < 2 else 500)


def test_report_holds_the_figures(built):
    text = (built.folder / REPORT).read_text(encoding="utf-8")
    for heading in ("Design", "Derived geometry", "Mesh", "Physical groups", "Design numbers", "Cautions"):
        assert f"<h2>{heading}</h2>" in text
    for group in ("inlet", "outlet", "wall", "fluid"):
        assert f"<td>{group}</td>" in text
    assert "hydraulic diameter" in text and "Reynolds" in text
    assert "fabricator" in text  # the mould / mask caution
    # hydraulic diameter 4A/P = 2 w h / (w + h) = 2*150*60/210 um (Shah & London 1978, rectangle)
    assert f"{2 * 150 * 60 / 210:.6g}" in text


def test_quality_histograms_are_drawn_from_the_build_manifest(built):
    quality = built.manifest["quality"]
    assert set(quality["histograms"]) == {"scaled_jacobian", "aspect_ratio", "wall_cell_m"}
    # each histogram counts every volume cell once (wall heights: one per wall facet)
    assert sum(quality["histograms"]["scaled_jacobian"]["counts"]) == built.mesh.n_volume_cells
    text = report_html(loads_design(DESIGN), built.mesh, built.manifest, [])
    assert len(re.findall(r"<img ", text)) == 2 + 3 + 2  # plan, 3D view, three histograms, resolution
    assert "scaled Jacobian min" in text


def test_pictures_drawn_ahead_give_the_page_drawn_with_them(built):
    """The build draws every picture in its background thread from its manifest sections
    (report_pictures with sections); the page must be the one drawn in one go, byte for byte
    (matplotlib's Agg output is deterministic for the same input)."""
    from chanmesh.report.html import report_pictures

    design = loads_design(DESIGN)
    ahead = report_pictures(design, built.mesh, built.manifest)
    assert len(ahead.charts) == 3 and len(ahead.section) == 2
    assert report_html(design, built.mesh, built.manifest, [], ahead) == report_html(design, built.mesh, built.manifest, [])


def test_a_manifest_without_quality_says_so(built):
    manifest = {k: v for k, v in built.manifest.items() if k != "quality"}
    text = report_html(loads_design(DESIGN), built.mesh, manifest, [])
    assert "No quality figures" in text
    assert len(re.findall(r"<img ", text)) == 2 + 2  # plan, 3D view, the resolution figure's two


@needs_chromium
def test_report_renders_in_headless_chromium(built, tmp_path):
    page = tmp_path / "probe.html"
    page.write_text((built.folder / REPORT).read_text(encoding="utf-8").replace("</body>", PROBE + "</body>"))
    dom = _chromium("--virtual-time-budget=5000", "--dump-dom", page.as_uri())
    assert dom.returncode == 0, dom.stderr[-2000:]
    match = re.search(r'data-images="(\d+)/(\d+)"', dom.stdout)
    assert match and match.group(1) == match.group(2) == "7", "every embedded image decodes"
    shot = tmp_path / "shot.png"
    run = _chromium("--window-size=1280,2400", f"--screenshot={shot}", (built.folder / REPORT).as_uri())
    assert run.returncode == 0, run.stderr[-2000:]
    console = [line for line in (dom.stderr + run.stderr).splitlines() if ":CONSOLE" in line]
    assert not console, console
    img = np.asarray(Image.open(shot).convert("RGB")).astype(int)
    assert img.shape[:2] == (2400, 1280)
    inked = np.any(np.abs(img - 255) > 30, axis=2)
    assert inked.mean() > 0.02 and img.std() > 10


def test_report_speaks_as_the_design_file_does(built):
    """Issue 15 item 20: temperature as written (22 degrees C, not 295.15 K), lengths in µm, the
    Dean-number definition stated, the particle verdicts and Dean velocities of `numbers`, and
    report.html and manifest.json among the files."""
    text = re.sub(r"<[^>]+>", " ", (built.folder / REPORT).read_text(encoding="utf-8"))
    text = " ".join(text.split())
    assert "flow.temperature 22 °C" in text and "295.15" not in text
    assert "section.width 150 µm" in text and " um " not in text.replace("dxf_unit um", "")  # a value, as written
    assert "De = Re * sqrt(D_h / (2 R))" in text  # Dean (1928) with D_h and the radius of curvature
    numbers = built.manifest["numbers"]
    verdict = "yes" if numbers["particles"][0]["expected_to_focus"] else "no"
    assert f"10 µm {numbers['particles'][0]['confinement']:.6g}" in text and verdict in text
    velocity = numbers["dean"]["stations"][0]["dean_velocity_m_s"] * 1e3
    assert f"{velocity:.6g}" in text
    assert "report.html this page" in text and "manifest.json written last" in text


def test_histograms_sharing_one_figure_are_drawn_as_alone():
    """The quality histograms share one figure and axes (histogram_pngs swaps the bars): each
    picture must be the one its chart gives drawn alone, pixel for pixel, whatever came
    before it: a count of millions (matplotlib's 1e6 offset above the axis, the title lifted
    over it), a range of micrometres, a range of -1..1. The pictures are opaque RGB PNGs."""
    from chanmesh.report.charts import histogram_pngs

    charts = [
        ("scaled Jacobian", np.linspace(-1.0, 1.0, 41), np.r_[np.zeros(38), 1.0, 4.0e6]),
        ("wall-adjacent cell (µm)", np.linspace(0.79680, 0.79690, 31), np.arange(30.0) ** 3),
        ("aspect ratio", np.linspace(1.0, 3.0, 21), np.full(20, 7.0)),
    ]
    together = histogram_pngs(charts)
    for chart, png in zip(charts, together):
        alone = np.asarray(Image.open(io.BytesIO(histogram_pngs([chart])[0])))
        shared = Image.open(io.BytesIO(png))
        assert shared.mode == "RGB" and shared.size == (520, 300)
        assert np.array_equal(np.asarray(shared), alone)
    assert len({bytes(p) for p in together}) == 3  # three different pictures, not one redrawn
    assert histogram_pngs([]) == []


@pytest.mark.parametrize("width_um, height_um, stacked", [(240, 60, True), (120, 100, False)])
def test_wide_sections_are_drawn_one_above_the_other_across_the_picture(width_um, height_um, stacked):
    # a 4:1 section side by side came out about 100 pixels high; stacked, each panel spans most of
    # the picture's width, so the filled section (Blues, blue well above red) covers far more rows
    from chanmesh.flow import solve_section_flow
    from chanmesh.report.section_view import solutions_png

    d = loads_design(f'name = "s"\nunit = "um"\n[section]\nwidth = {width_um}\nheight = {height_um}\n'
                     '[path]\nkind = "arc"\nradius = 1000\nangle = 90\n')
    flow = solve_section_flow(d.section, 1e-3, 997.0, 0.89e-3, 2e-9, estimate_error=False)
    png = solutions_png(d, flow, flow, 1e-3, {"secondary_max": 0.0})
    rgb = np.asarray(Image.open(io.BytesIO(png)).convert("RGB")).astype(int)
    blue = (rgb[..., 2] - rgb[..., 0] > 40).sum(axis=1) > 0.3 * rgb.shape[1]  # rows mostly filled section
    wide_rows = 2 * 0.6 * (rgb.shape[1] - 220) * height_um / width_um  # two panels at 60 % of the axes' width
    assert (blue.sum() > wide_rows) == stacked
