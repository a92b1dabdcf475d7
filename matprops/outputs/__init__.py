"""The outputs layer: what is made from a material's numbers.

- :mod:`.export` — netCDF (CF), CSV and JSON files, written atomically;
- :mod:`.plotting` — PNG/SVG plots of tables and comparisons;
- :mod:`.modeldocs` — the generated model catalogue ``docs/models.md``;
- :mod:`.reference` — frozen reference evaluations of releases
  (``python -m matprops.outputs.reference``);
- :mod:`.changes` — what changed between two releases.
"""
