"""A thin layer over the gmsh API: one session at a time, solids in millimetres, size fields,
boundary labels by geometric query. Nothing else in chanmesh imports gmsh directly except the
writers that use gmsh's own file formats."""
