"""Post-processing: convergence reports (``gci``, ``gci_table``, ``gci_io``); stations and
section cuts of results (``stations``, ``cut``, ``cut_io``, ``cut_plot``, ``result_file``)."""
