"""Post-processing of meshes: quality figures (sections and convergence reports come later)."""
