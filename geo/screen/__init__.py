"""Portfolio screening: reading site files, the local and Dask runners, writing results."""
