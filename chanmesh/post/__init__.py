"""Post-processing: mesh quality (``quality``), convergence reports (``gci``, ``gci_table``,
``gci_io``), stations and cross-sections."""
