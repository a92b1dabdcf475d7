"""matprops: a pinned, citable, unit-aware database of crystalline-silicon parameters.

>>> import matprops
>>> si = matprops.silicon()            # newest release
>>> si.band_gap(300)                   # doctest: +SKIP
<Quantity(1.12426238, 'electron_volt')>

Importing matprops is cheap: pint, xarray and the data files load on first use,
so a simulation code that only needs ``matprops.kernels`` pays for numpy alone.
The numbers are model estimates; for decisions with consequences (thermal
limits, electrical ratings) defer to measured data, local codes and licensed
practice.
"""

from importlib import import_module

from . import errors as _errors
from ._version import __version__
from .errors import *

__all__ = [
    "silicon",
    "Silicon",
    "releases",
    "models",
    "fit",
    "create_catalogue",
    "create_release",
    "freeze_release",
    "Q_",
    "ureg",
    "optics",
    "report",
    "explain",
    "__version__",
    *_errors.__all__,
]

# name -> module that defines it; imported on first access (PEP 562)
_LAZY = {
    "silicon": "material.silicon",
    "Silicon": "material.silicon",
    "releases": "material.silicon",
    "models": "material.silicon",
    "fit": "outputs.fitting",
    "create_catalogue": "outputs.catalogues",
    "create_release": "outputs.catalogues",
    "freeze_release": "outputs.catalogues",
    "Q_": "units",
    "ureg": "units",
    "report": "outputs.report",
    "explain": "outputs.explain",
}
# submodules reachable as attributes (``from matprops import export``): the layers,
# and the public modules of the outputs and material layers by their short names
_SUBMODULES = {
    "optics": "optics",
    "units": "units",
    "kernels": "kernels",
    "catalogue": "catalogue",
    "material": "material",
    "outputs": "outputs",
    "cli": "cli",
    "tables": "material.tables",
    "export": "outputs.export",
    "plotting": "outputs.plotting",
    "changes": "outputs.changes",
    "fitting": "outputs.fitting",
}


def __getattr__(name):
    if name in _LAZY:
        value = getattr(import_module(f".{_LAZY[name]}", __name__), name)
        if name != "Q_":  # Q_ follows the application registry, whenever it is set
            globals()[name] = value
        return value
    if name in _SUBMODULES:
        return import_module(f".{_SUBMODULES[name]}", __name__)
    raise AttributeError(f"module 'matprops' has no attribute {name!r}")


def __dir__():
    return sorted(set(globals()) | set(__all__))
