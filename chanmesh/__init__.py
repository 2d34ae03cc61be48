"""chanmesh: design file in, labelled and wall-graded 3D meshes of curved microchannels out.

The package is layered (see DEVELOPERS.md):

* ``design``   -- the design file: frozen dataclasses in SI units, loading and feasibility checks;
* ``geometry`` -- pure numpy: centrelines, cross-sections, analytic reference values;
* ``gmshlayer``-- a thin layer over gmsh: session, solids, sizing fields, boundary labels;
* ``meshing``  -- mesh assembly into one neutral ``ChannelMesh`` (tet through gmsh, hex in numpy);
* ``writers``  -- one module per output format, registered by name;
* ``post``     -- quality figures, sections, convergence reports;
* ``cli``      -- the ``chanmesh`` command, one module per subcommand.
"""

import chanmesh.interrupt  # noqa: F401  first: a Ctrl-C during the imports below exits 130 with one line
from chanmesh.errors import ChanmeshError, DesignError, MeshFileError

__version__ = "0.1.0"

__all__ = ["ChanmeshError", "DesignError", "MeshFileError", "__version__"]
