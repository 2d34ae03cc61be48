"""chanmesh's ASCII MSH through OpenFOAM's own converter, gmshToFoam (Debian's OpenFOAM v1912).

gmshToFoam matches every surface element against the boundary faces through the element's
first node, and warns "Not using gmsh face ... since zero vertex is not on boundary of polyMesh"
for each internal section facet whose first node is inside the channel (it then files the face
in a faceZone with flipMap all 1, and leaves an empty patch of the same name). With
``--msh-no-sections`` the MSH holds only what the converter needs: the volume and the boundary
groups. The one warning left ("Found N undefined faces in mesh; adding to default patch") is
printed by every conversion: gmshToFoam first puts all boundary faces into a default patch.
"""

from __future__ import annotations

import pytest

from chanmesh.cli import main
from tests._openfoam import OPENFOAM_ENV, arc_case_text, needs_openfoam, run_tool

pytestmark = needs_openfoam


@pytest.mark.parametrize("cells,mesh", [("hex", 'cells_across = 6\ncells_along = 12\nsections = ["45deg"]'),
                                        ("tet", 'cells_across = 4\nsections = ["45deg"]')])
def test_gmshtofoam_converts_without_warnings(tmp_path, cells, mesh):
    import subprocess

    d = tmp_path / "d.toml"
    d.write_text(arc_case_text(f"conv-{cells}", cells, mesh))
    out = tmp_path / "o"
    assert main(["build", str(d), "--format", "msh", "--msh-no-sections", "--out", str(out), "--quiet"]) == 0
    case = tmp_path / "case"
    (case / "system").mkdir(parents=True)
    (case / "system" / "controlDict").write_text(
        "FoamFile { version 2.0; format ascii; class dictionary; object controlDict; }\n"
        "application simpleFoam; startFrom startTime; startTime 0; stopAt endTime; endTime 1; deltaT 1;\n"
        "writeControl timeStep; writeInterval 1;\n")
    (case / "system" / "fvSchemes").write_text(  # checkMesh reads these two, empty is enough
        "FoamFile { version 2.0; format ascii; class dictionary; object fvSchemes; }\n"
        "ddtSchemes {} gradSchemes {} divSchemes {} laplacianSchemes {} interpolationSchemes {} snGradSchemes {}\n")
    (case / "system" / "fvSolution").write_text(
        "FoamFile { version 2.0; format ascii; class dictionary; object fvSolution; }\n")
    proc = subprocess.run(["gmshToFoam", str(out / f"conv-{cells}.msh"), "-case", str(case)], env=OPENFOAM_ENV,
                          capture_output=True, text=True, timeout=120)
    log = proc.stdout + proc.stderr
    assert proc.returncode == 0, log[-2000:]
    assert "Not using gmsh face" not in log
    assert "Could not match" not in log
    assert log.count("Warning") == log.count("undefined faces in mesh") == 1
    boundary = (case / "constant" / "polyMesh" / "boundary").read_text()
    assert "section_1" not in boundary and "defaultFaces" not in boundary
    check = run_tool(["checkMesh"], case)
    assert "Mesh OK." in check
