"""Where a table's values lie inside their models' validity: a flag per point.

Every variable of a table or comparison carries a companion ``<name>_validity``
(CF ``flag_values`` / ``flag_meanings``, linked from the variable by
``ancillary_variables``):

- ``0`` ``within_validity``: every model that produced the value was used inside
  its stated validity ranges (and regions) at this point;
- ``1`` ``outside_validity``: at least one model was used outside a range: the
  value is an extrapolation (a table model: unvalidated);
- ``2`` ``no_value``: the value is missing (NaN: a table model has no data there).

The check is made on the table's own axes (temperature, dopant densities,
excess and carrier densities, wavelength, field) against the ranges of every
model behind the quantity: its own, those it is composed from, and for a derived
quantity (resistivity, diffusivity, ...) every model of its chain. A model's
range on an input the table does not have as an axis (a density the equilibrium
solver computes, say) is not judged per point here; the evaluation still warns
about it (``ValidityWarning``) over the whole grid.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "FLAG_MEANINGS",
    "FLAG_VALUES",
    "attributes",
    "flag_of",
    "flags",
    "is_flag",
    "models_behind",
    "outside_ranges",
    "value_names",
]

FLAG_VALUES = (0, 1, 2)
FLAG_MEANINGS = "within_validity outside_validity no_value"
WITHIN, OUTSIDE, NO_VALUE = FLAG_VALUES

# A model input that the table holds under another name: an ionisation model's
# ``dopant_density`` is the acceptor density for acceptors, the donor density for donors
# (judged on both: conservative for a table that has both).
_SAME_AS = {"dopant_density": ("acceptor_density", "donor_density", "dopant_density")}
# quantities whose output is itself a dopant density (judged against the density ranges)
_DENSITY_OUTPUTS = {"doping_from_resistivity", "standard_dopant_density"}


def models_behind(si, quantities) -> list:
    """Every bound model that produces ``quantities`` (their components too), once."""
    found, seen = [], set()

    def visit(model):
        key = (model.quantity, model.id)
        if key in seen:
            return
        seen.add(key)
        found.append(model)
        for component in model.components.values():
            visit(component)

    for name in quantities:
        try:
            visit(si.model(name))
        except Exception:  # a derived name without a model of its own
            continue
    return found


def _targets(argument: str, names) -> list[str]:
    return [n for n in _SAME_AS.get(argument, (argument,)) if n in names]


def outside_ranges(si, quantities, values) -> tuple[object, list[str]]:
    """Where ``values`` (input name -> array, broadcast together) leave a range.

    Returns (boolean array or False, descriptions of the ranges left somewhere).
    """
    outside = False
    left = []
    names = set(values)
    for model in models_behind(si, quantities):
        for argument, rng in model.validity.items():
            for target in _targets(argument, names):
                value = values[target]
                here = (value < rng.low) | (value > rng.high)
                if np.any(here):
                    outside = outside | here
                    left.append(f"{model.quantity}/{model.id}: {rng} ({target})")
        for region in model.regions:
            if region.argument in names and region.by in names:
                value, by = values[region.argument], values[region.by]
                bound = region.bound_at(np.asarray(by))
                if hasattr(by, "dims"):  # keep the labelled dimensions
                    bound = by.copy(data=bound)
                here = value > bound if region.limit == "max" else value < bound
                if np.any(here):
                    outside = outside | here
                    left.append(f"{model.quantity}/{model.id}: {region}")
    return outside, list(dict.fromkeys(left))


def flags(si, quantities, variable, dims, coords, name: str | None = None):
    """The validity flags of one table variable -> (xarray.DataArray of int8, ranges left).

    ``quantities``: the model quantities behind it; ``variable``: its values (an
    xarray.DataArray, lazy or not) on ``dims``; ``coords``: the table's coordinates
    (name -> DataArray, 1-D along its own dimension or scalar).
    """
    import xarray as xr

    values = {k: v for k, v in coords.items() if np.asarray(v).dtype.kind in "fiu"}
    if name in _DENSITY_OUTPUTS:  # the answer is the density the models are fed
        values = dict(
            values, dopant_density=variable, acceptor_density=variable, donor_density=variable
        )
    outside, left = outside_ranges(si, quantities, values)
    if not isinstance(outside, xr.DataArray):
        outside = xr.DataArray(bool(outside))
    outside = outside.drop_vars([c for c in outside.coords if c not in variable.coords])
    flag = xr.apply_ufunc(
        _combine,
        variable,
        outside,
        dask="parallelized",  # a lazy table gets lazy flags, block by block
        output_dtypes=[np.int8],
        keep_attrs=False,
    )
    flag = flag.broadcast_like(variable).transpose(*variable.dims)
    return flag, left


def _combine(values, outside):
    """Flags from values (NaN: no value) and the outside-a-range mask (broadcast)."""
    flag = np.where(np.asarray(outside), np.int8(OUTSIDE), np.int8(WITHIN))
    return np.where(np.isnan(values), np.int8(NO_VALUE), flag).astype(np.int8)


def is_flag(variable) -> bool:
    """Whether a Dataset variable holds validity flags (not values)."""
    return "flag_values" in variable.attrs and str(variable.name).endswith("_validity")


def flag_of(data, name: str):
    """The flag variable of ``data[name]`` (None if it has none)."""
    linked = data[name].attrs.get("ancillary_variables", "")
    for other in str(linked).split():
        if other in data.variables and is_flag(data[other]):
            return data[other]
    return None


def value_names(data) -> list[str]:
    """The data variables of ``data`` that hold values (not flags)."""
    return [n for n, v in data.data_vars.items() if not is_flag(v)]


def attributes(variable_name: str, long_name: str, left: list[str], quantity: str = "") -> dict:
    """CF attributes of a flag variable (netCDF attributes: strings and lists only)."""
    return {
        "long_name": f"validity of: {long_name}",
        "quantity": quantity,
        "flag_values": np.array(FLAG_VALUES, dtype=np.int8),
        "flag_meanings": FLAG_MEANINGS,
        "comment": (
            "0: every model inside its validity ranges at this point; 1: at least one "
            "model used outside a range (an extrapolation); 2: no value (NaN). Judged on "
            "the table's axes against the ranges of every model behind the value."
            + (" Ranges left somewhere in this table: " + "; ".join(left) + "." if left else "")
        ),
    }
