"""The material layer: :class:`Silicon`, the facade of one release's models.

- :mod:`.silicon` — the facade: binds one model per quantity, checks inputs and
  validity, composes quantities, reports provenance;
- :mod:`.carriers`, :mod:`.crystal`, :mod:`.optical`, :mod:`.transport`,
  :mod:`.recombination` — the families of methods behind it, one module each;
- :mod:`.derived` — which quantities are composed from others;
- :mod:`.bound` — bound kernels, the door for simulation codes;
- :mod:`.results` — the result type of answers with several fields;
- :mod:`.tables` — grids of quantities as ``xarray.Dataset`` and model comparison
  (``si.table``, ``si.compare``: part of the facade, so they live in this layer).
"""

from .silicon import Silicon, models, releases, silicon

__all__ = ["Silicon", "models", "releases", "silicon"]
