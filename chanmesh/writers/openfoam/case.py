"""The dictionaries of a steady laminar OpenFOAM case: 0/U, 0/p, constant/transportProperties,
constant/turbulenceProperties (+ momentumTransport), system/controlDict, fvSchemes, fvSolution.

Choices (README "An OpenFOAM case"):

* Inlet velocity: the fully developed laminar profile of the rectangular duct (White 2006,
  eq. 3-48) on a single ``inlet`` of a rectangular section, scaled face by face so that the
  discrete inflow is exactly the design's rate. A uniform inlet would add an entrance region
  (0.6-6 hydraulic diameters at Re 1-100) in which the Dean vortices are not yet those of the
  bend; a real chip's channel upstream of the bend is long. Other inlets (a trapezoid section,
  or split inlets ``inlet_k``) get ``flowRateInletVelocity``: a uniform profile carrying the
  exact rate (split inlets: in proportion to their areas).
* Pressure: kinematic (p / rho, m^2/s^2, what simpleFoam solves for), 0 at every outlet, so
  split outlets share one back pressure; zero gradient elsewhere.
* Numerics: SIMPLEC (``consistent yes``, no pressure relaxation), bounded linearUpwind for
  convection (second order, robust), linear corrected Laplacians (limited for tetrahedra,
  whose non-orthogonality is larger), GAMG for pressure, residual control to stop.
* Function objects: the area-averaged inlet pressure and the flux (sum of phi) of every inlet,
  outlet and section face zone, every iteration, in postProcessing/<name>/0/.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from chanmesh.writers.openfoam.foamio import write_dict
from chanmesh.writers.openfoam.polymesh import Patch, PolyMesh, Zone

MAX_ITERATIONS = 3000
RESIDUAL_P = 1e-6
RESIDUAL_U = 1e-7


@dataclass(frozen=True)
class Operating:
    """What the case needs from the design: rate m^3/s, nu m^2/s, rho kg/m^3, tet or hex."""

    rate: float
    nu: float
    density: float
    tetrahedra: bool


def _dims(length: int, time: int) -> "object":
    from foamlib import DimensionSet

    return DimensionSet(length=length, time=time)


def _vector_list(values: np.ndarray) -> str:
    rows = "\n".join(f"({x!r} {y!r} {z!r})" for x, y, z in np.asarray(values, float).tolist())
    return f"nonuniform List<vector>\n{len(values)}\n(\n{rows}\n)"


def write_fields(case: Path, mesh: PolyMesh, op: Operating, inlet_values: dict[str, np.ndarray]) -> list[Path]:
    """0/U and 0/p. ``inlet_values``: patch name -> (n, 3) face velocities (m/s) for inlets with a
    prescribed profile; other inlets get ``flowRateInletVelocity`` by area."""
    inlets = [p for p in mesh.patches if p.name.startswith("inlet")]
    outlets = [p for p in mesh.patches if p.name.startswith("outlet")]
    areas = {p.name: patch_area(mesh, p) for p in inlets}
    total = sum(areas.values())
    u_bc: dict[str, object] = {}
    p_bc: dict[str, object] = {}
    for patch in mesh.patches:
        if patch in inlets:
            if patch.name in inlet_values:
                u_bc[patch.name] = {"type": "fixedValue", "value": f"chanmesh_profile_{patch.name}"}
            else:
                u_bc[patch.name] = {"type": "flowRateInletVelocity", "volumetricFlowRate": op.rate * areas[patch.name] / total,
                                    "extrapolateProfile": False, "value": np.zeros(3)}
            p_bc[patch.name] = {"type": "zeroGradient"}
        elif patch in outlets:
            u_bc[patch.name] = {"type": "zeroGradient"}
            p_bc[patch.name] = {"type": "fixedValue", "value": 0.0}
        elif patch.type == "wall":
            u_bc[patch.name] = {"type": "noSlip"}
            p_bc[patch.name] = {"type": "zeroGradient"}
        else:  # any other open boundary: treated like an outlet
            u_bc[patch.name] = {"type": "zeroGradient"}
            p_bc[patch.name] = {"type": "fixedValue", "value": 0.0}
    files = []
    path = write_dict(case / "0" / "U", "volVectorField", "U", "0",
                      {"dimensions": _dims(1, -1), "internalField": np.zeros(3), "boundaryField": u_bc},
                      comment=f"velocity, m/s; inflow {op.rate:.6g} m^3/s ({op.rate * 6e7:.6g} mL/min) in all")
    text = path.read_text()
    for name, values in inlet_values.items():
        text = text.replace(f"chanmesh_profile_{name}", _vector_list(values))
    path.write_text(text)
    files.append(path)
    files.append(write_dict(case / "0" / "p", "volScalarField", "p", "0",
                            {"dimensions": _dims(2, -2), "internalField": 0.0, "boundaryField": p_bc},
                            comment=f"kinematic pressure p/rho, m^2/s^2: multiply by rho = {op.density:.8g} kg/m^3 for Pa"))
    return files


def write_constant(case: Path, op: Operating) -> list[Path]:
    from foamlib import Dimensioned

    nu = Dimensioned(op.nu, _dims(2, -1), "nu")
    laminar = {"simulationType": "laminar"}
    return [
        write_dict(case / "constant" / "transportProperties", "dictionary", "transportProperties", "constant",
                   {"transportModel": "Newtonian", "nu": nu},
                   comment=f"Newtonian: nu = mu / rho, m^2/s; rho = {op.density:.8g} kg/m^3"),
        write_dict(case / "constant" / "turbulenceProperties", "dictionary", "turbulenceProperties", "constant", laminar,
                   comment="laminar flow (read by OpenFOAM v1912 and the other openfoam.com releases)"),
        write_dict(case / "constant" / "momentumTransport", "dictionary", "momentumTransport", "constant", laminar,
                   comment="the same, under the name the openfoam.org releases 8 and later read"),
    ]


def _function_objects(mesh: PolyMesh) -> dict[str, object]:
    out: dict[str, object] = {}
    common = {"type": "surfaceFieldValue", "libs": ["fieldFunctionObjects"], "writeControl": "timeStep",
              "writeInterval": 1, "writeFields": False, "log": False}
    for patch in mesh.patches:
        if patch.name.startswith("inlet"):
            out[f"pressure_{patch.name}"] = {**common, "regionType": "patch", "name": patch.name,
                                             "operation": "areaAverage", "fields": ["p"]}
    for patch in mesh.patches:
        if patch.type != "wall":
            out[f"flux_{patch.name}"] = {**common, "regionType": "patch", "name": patch.name,
                                         "operation": "sum", "fields": ["phi"]}
    for zone in mesh.zones:
        out[f"flux_{zone.name}"] = {**common, "regionType": "faceZone", "name": zone.name,
                                    "operation": "sum", "fields": ["phi"]}
    return out


def write_system(case: Path, mesh: PolyMesh, op: Operating) -> list[Path]:
    control = {
        "application": "simpleFoam", "startFrom": "latestTime", "startTime": 0, "stopAt": "endTime",
        "endTime": MAX_ITERATIONS, "deltaT": 1, "writeControl": "timeStep", "writeInterval": MAX_ITERATIONS,
        "purgeWrite": 0, "writeFormat": "ascii", "writePrecision": 10, "writeCompression": False,
        "timeFormat": "general", "timePrecision": 6, "runTimeModifiable": True,
        "functions": _function_objects(mesh),
    }
    laplacian = ("Gauss", "linear", "limited", "corrected", 0.5) if op.tetrahedra else ("Gauss", "linear", "corrected")
    sn_grad = ("limited", "corrected", 0.5) if op.tetrahedra else "corrected"
    schemes = {
        "ddtSchemes": {"default": "steadyState"},
        "gradSchemes": {"default": ("Gauss", "linear")},
        "divSchemes": {"default": "none", "div(phi,U)": ("bounded", "Gauss", "linearUpwind", "grad(U)"),
                       "div((nuEff*dev2(T(grad(U)))))": ("Gauss", "linear")},
        "laplacianSchemes": {"default": laplacian},
        "interpolationSchemes": {"default": "linear"},
        "snGradSchemes": {"default": sn_grad},
    }
    solution = {
        "solvers": {
            "p": {"solver": "GAMG", "smoother": "GaussSeidel", "tolerance": 1e-10, "relTol": 0.01},
            "U": {"solver": "smoothSolver", "smoother": "symGaussSeidel", "tolerance": 1e-12, "relTol": 0.1},
        },
        "SIMPLE": {"consistent": True, "nNonOrthogonalCorrectors": 0,
                   "residualControl": {"p": RESIDUAL_P, "U": RESIDUAL_U}},
        "relaxationFactors": {"equations": {"U": 0.9}},
    }
    return [
        write_dict(case / "system" / "controlDict", "dictionary", "controlDict", "system", control,
                   comment=f"steady: one time step is one SIMPLE iteration; stops at {MAX_ITERATIONS} or when "
                           "the residual control of fvSolution is met, writing the result then"),
        write_dict(case / "system" / "fvSchemes", "dictionary", "fvSchemes", "system", schemes),
        write_dict(case / "system" / "fvSolution", "dictionary", "fvSolution", "system", solution),
    ]


def patch_area(mesh: PolyMesh, patch: Patch) -> float:
    from chanmesh.writers.openfoam.polymesh import _area_vectors

    faces = np.arange(patch.start, patch.start + patch.size)
    return float(np.linalg.norm(_area_vectors(mesh.points, mesh.offsets, mesh.nodes, faces), axis=1).sum())


def write_mesh_dicts(case: Path, mesh: PolyMesh) -> list[Path]:
    """``boundary`` and ``faceZones`` (small; through foamlib)."""
    poly = case / "constant" / "polyMesh"
    boundary = [(p.name, {"type": p.type, **({"inGroups": ["wall"]} if p.type == "wall" else {}),
                          "nFaces": p.size, "startFace": p.start}) for p in mesh.patches]
    files = [write_dict(poly / "boundary", "polyBoundaryMesh", "boundary", "constant/polyMesh", boundary)]
    if mesh.zones:
        files.append(write_dict(poly / "faceZones", "regIOobject", "faceZones", "constant/polyMesh",
                                [_zone_entry(z) for z in mesh.zones]))
    return files


def _zone_entry(zone: Zone) -> tuple[str, dict[str, object]]:
    return (zone.name, {"type": "faceZone", "faceLabels": zone.faces.astype(np.int64),
                        "flipMap": zone.flip.astype(np.int64)})
