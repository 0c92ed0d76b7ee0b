"""Trade studies: many variants of a case at once, locally or on a Dask cluster, and comparisons
of finished runs.

- `variants`: the grid of ``--vary KEY=V1,V2`` overrides on a case file (dotted key paths), or a
  list of case files, each turned into a variant case file with absolute geometry paths.
- `overrides`, `toml_text`: parsing ``--vary`` options and setting them into a case file; the
  TOML writer of the variant case files.
- `runner`: runs the variants serially, on a local process pool or on a running
  dask.distributed scheduler, sharing the geometry read/cut and the factorised aero models
  between variants of one geometry, and assembles the batch folder atomically.
- `assemble`: the batch folder (batch.csv with the root loads and their error bars, plots,
  index.html); `html_page`: the one page layout of index.html and compare.html.
- `compare`: overlays the envelopes of finished runs and tabulates their differences.
- the click commands ``batch`` and ``compare`` live in geomload.cli.batch_cmd.

Every library function returns data; nothing here prints.
"""
