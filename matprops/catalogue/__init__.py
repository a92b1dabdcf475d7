"""The catalogue layer: the numbers of ``datasets/`` as checked, immutable records.

- :mod:`.records` — sources, coefficients, validity ranges, models, releases
  (immutable; they never import the catalogue that builds them);
- :mod:`.fields`, :mod:`.regions`, :mod:`.schema` — reading and checking the fields
  of a data file;
- :mod:`.conventions` — what a model's coefficients were fitted with (the
  ``[fit_conventions]`` section of a composed quantity's model file);
- :mod:`.modelfile` — the checks and binding of one model file to its kernel;
- :mod:`.store` — :class:`Catalogue`: finds, verifies (checksums) and loads the files;
- :mod:`.overlay` — overlay catalogues: a lab's own models and releases layered over
  the shipped data (:mod:`.folders` writes their folders), each checked like them;
- :mod:`.defects` — the defect catalogue of Shockley-Read-Hall centres;
- :mod:`.checks` — the integrity check of a whole datasets folder
  (``python -m matprops.catalogue``).

Imports run downward only: records -> fields/regions/schema -> conventions -> modelfile -> store ->
folders -> overlay -> defects -> checks.
"""

from .records import Coefficient, Model, Range, Release, Source
from .regions import Region
from .store import Catalog as Catalog  # former spelling, still served
from .store import Catalogue, catalogue_at, datasets_root, default_catalogue, sha256_of
from .store import catalog_at as catalog_at  # former spelling, still served
from .store import default_catalog as default_catalog  # former spelling, still served

__all__ = [
    "Catalogue",
    "Coefficient",
    "Model",
    "Range",
    "Region",
    "Release",
    "Source",
    "catalogue_at",
    "datasets_root",
    "default_catalogue",
    "sha256_of",
]
