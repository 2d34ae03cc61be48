"""Post-processing: convergence reports (``gci``, ``gci_table``, ``gci_io``)."""
