"""Batch screening of a facility's letdown list: the file layout (CSV and XLSX with units in the headers),
reading and checking a file row by row, writing results, and running batches as background jobs.

Sits at the edge with the web and the CLI: it converts units (jtcheck.units) and hands SI values to the
engineering core (jtcheck.screening.batch).
"""
