"""Design sweeps: vary keys of a design file, build every variant (on dask.distributed),
resume where a killed sweep stopped, and summarise in ``summary.csv``."""
