"""Stage 5, run and build: processes and budgets, the result cache, Dask, the top-down build and
the preview server.
"""
