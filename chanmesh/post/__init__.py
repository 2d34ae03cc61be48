"""Post-processing: mesh quality (``quality``), convergence reports (``gci``, ``gci_table``,
``gci_io``) and cross-sections read out of results (``cut``)."""
