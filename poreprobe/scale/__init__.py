"""Many structures: trajectory analysis (MDAnalysis), parallel backends (dask), batches."""
