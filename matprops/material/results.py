"""The one result type for answers with several fields (equilibrium, lifetimes, ...).

A :class:`Result` is a frozen dataclass whose fields are pint quantities (arrays
broadcast to one shape), plus plain-text fields such as the statistics used, and
the provenance of every model that produced it. Its repr prints each field with
its units; :meth:`Result.to_dataset` turns it into an ``xarray.Dataset`` with
CF-style units and the provenance as an attribute.
"""

from __future__ import annotations

import dataclasses
import json

import numpy as np

__all__ = ["Result"]


@dataclasses.dataclass(frozen=True, repr=False)
class Result:
    """Base class: subclasses declare their fields (pint quantities or strings)."""

    def quantities(self) -> dict:
        """Field name -> pint quantity, in declaration order."""
        return {
            f.name: getattr(self, f.name)
            for f in dataclasses.fields(self)
            if hasattr(getattr(self, f.name), "units")
        }

    def __iter__(self):
        return iter(self.quantities().items())

    def __repr__(self) -> str:
        lines = [f"<{type(self).__name__}"]
        for f in dataclasses.fields(self):
            value = getattr(self, f.name)
            if f.name == "provenance":
                continue
            if hasattr(value, "units"):
                magnitude = np.asarray(value.magnitude)
                shown = (
                    f"{magnitude.item():.6g}"
                    if magnitude.size == 1
                    else np.array2string(magnitude, precision=4, threshold=6)
                )
                lines.append(f"  {f.name} = {shown} {value.units:~P}")
            else:
                lines.append(f"  {f.name} = {value}")
        return "\n".join(lines) + "\n>"

    def to_dataset(self, dims: tuple[str, ...] | None = None):
        """An ``xarray.Dataset`` of the quantity fields (units as CF/UDUNITS strings).

        ``dims`` names the axes of the broadcast shape (default ``point_0``, ...).
        """
        import xarray as xr

        from ..units import cf_units

        variables = {}
        for name, value in self.quantities().items():
            magnitude = np.asarray(value.magnitude, dtype=float)
            names = dims if dims is not None else tuple(f"point_{i}" for i in range(magnitude.ndim))
            variables[name] = (names[: magnitude.ndim], magnitude, {"units": cf_units(value.units)})
        attrs = {
            f.name: getattr(self, f.name)
            for f in dataclasses.fields(self)
            if isinstance(getattr(self, f.name), str)
        }
        provenance = getattr(self, "provenance", None)
        if provenance is not None:
            attrs["provenance"] = json.dumps(provenance, ensure_ascii=False, default=str)
        return xr.Dataset(variables, attrs=attrs)
