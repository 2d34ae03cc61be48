"""Post-processing: mesh quality (``quality``), convergence reports (``gci``, ``gci_table``,
``gci_io``), stations (``stations``) and cross-sections read out of results (``cut``)."""
