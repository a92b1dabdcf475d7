"""Grids of quantities -> xarray.Dataset, and model comparison.

The analyst's door. What can be tabulated is the quantity registry
(:mod:`.registry`, here :data:`QUANTITIES`): each declared quantity spans the grid
axes (:data:`AXES`, the axes of the argument vocabulary: temperature, doping, excess
density, wavelength, carrier, ...) its :class:`~matprops.Silicon` method takes. A
quantity declared beside its method is tabulable, comparable and plottable from the
command line with nothing more.

A table's dimensions are the axes actually given (a scalar becomes a scalar
coordinate, a list a dimension), in the fixed order of :data:`AXES`; each variable
spans only the dimensions its quantity depends on. Every variable carries its
units (UDUNITS strings, as CF asks), a long name, the id of its model and its full
provenance (a JSON string, since netCDF attributes cannot hold objects); the
dataset carries the release, the references and the call that made it.

Large grids are evaluated in blocks of about 2^18 points written into
preallocated outputs (memory and time stay linear in the grid size; the validity
check runs once on the grid's extremes). ``chunks=`` returns a lazy dask-backed
Dataset instead, for sweeps larger than memory, made with
``xr.apply_ufunc(..., dask="parallelized")`` over the chunked axes; any dask
scheduler (threads, a ``dask.distributed`` cluster) evaluates it, each worker
rebuilding the material from its recipe.

Writing files (netCDF, CSV, JSON) lives in :mod:`matprops.outputs.export`.
"""

from __future__ import annotations

import functools
import itertools
import json
import math
from collections.abc import Callable, Iterable, Mapping

import numpy as np

from .. import vocabulary
from ..errors import (
    InputError,
    SkippedModelWarning,
    UnknownModelError,
    UnknownQuantityError,
    warn,
)
from ..units import NEEDS_UNIT, cf_units, parse, to_magnitude
from ..units import name as check_name
from ..units import names as check_names
from .registry import REGISTRY, Quantity

__all__ = [
    "AXES",
    "QUANTITIES",
    "Axis",
    "Tabulated",
    "available",
    "axis",
    "axis_units",
    "cf_units",
    "compare",
    "table",
]

BLOCK = 1 << 18  # points per evaluation block (~2 MB per float64 temporary)

#: the grid axes (:data:`matprops.vocabulary.AXES`), in the order of a table's dimensions
AXES = vocabulary.AXES
Axis = vocabulary.Argument
#: the tabulable quantities: the quantity registry (:mod:`.registry`)
QUANTITIES = REGISTRY
Tabulated = Quantity

#: Most values (grid points x outputs, over every quantity) a table evaluates in memory
#: unless told otherwise (``max_values=``; ``--allow-large`` on the command line): 1e8
#: float64 values are 0.8 GB. A lazy table (``chunks=``) is not held in memory and has
#: no such limit.
MAX_VALUES = 10**8


def axis(name: str) -> Axis:
    """The axis for a name or alias (``"Na"`` -> acceptor_density)."""
    key = vocabulary.canonical_name(name)
    if key not in AXES:
        known = sorted(n for ax in AXES.values() for n in ax.names)
        raise InputError(name, f"a grid axis: one of {', '.join(known)}", "an unknown keyword")
    return AXES[key]


def axis_units(ax: Axis) -> str | None:
    """The UDUNITS string of a numeric axis (None for a category)."""
    return None if ax.category else cf_units(ax.units)


def available(si) -> list[str]:
    """Registry quantities that ``si`` can evaluate (its release serves their models);
    found once per material (its models are fixed when it is made)."""
    cached = si.__dict__.get("_table_available")
    if cached is None:
        served = si.models  # (a dict built on each access: once here)
        cached = si.__dict__["_table_available"] = [
            name
            for name, entry in QUANTITIES.items()
            if hasattr(si, entry.method) and all(q in served for q in entry.needs)
        ]
    return list(cached)


# --------------------------------------------------------------------------- units

_DISPLAY_TEMPERATURE = {
    "kelvin": "K",
    "degree_Celsius": "degC",
    "degree_Fahrenheit": "degF",
    "degree_Rankine": "degR",
}


# --------------------------------------------------------------------------- grids


def _category_value(ax: Axis, item, catalogue) -> str:
    """The canonical value of one category item (``"electrons"`` -> ``"electron"``,
    ``"B"`` -> ``"boron"``, ``"Fe_i"`` -> ``"iron-interstitial"``)."""
    if ax.name == "defect":
        from ..catalogue import defects

        if not isinstance(item, str):
            raise InputError(ax.name, "a name or alias of the defect catalogue", repr(item))
        return defects.defect(item, catalogue).name
    return vocabulary.canonical(ax.name, item)


def _grid_values(ax: Axis, value, catalogue=None):
    """Coerce one axis: (values in internal units or strings, requested units, is_dim)."""
    import pint

    if ax.category:
        items = [value] if isinstance(value, str) or np.ndim(value) == 0 else list(value)
        cleaned = [_category_value(ax, item, catalogue) for item in items]
        if not cleaned:
            raise InputError(ax.name, "at least one value", "an empty list")
        scalar = isinstance(value, str) or np.ndim(value) == 0
        return np.asarray(cleaned, dtype=object), None, not scalar
    if (
        isinstance(value, (list, tuple))
        and value
        and all(isinstance(v, str) for v in value)
        and any(v in QUANTITIES for v in value)
    ):
        raise InputError(
            ax.name,
            f"numbers in {ax.units} (quantity names go in the first argument, as one list)",
            repr(value),
        )
    requested = None
    if isinstance(value, str):  # "25 degC": the units layer's one parser of such text
        value = parse(value, ax.name, ax.units)
    if isinstance(value, pint.Quantity) and ax.name == "temperature":
        for name in value.units._units:
            requested = _DISPLAY_TEMPERATURE.get(name)
    array = to_magnitude(value, ax.name, ax.units, ax.requirement)
    if array.ndim > 1:
        raise InputError(ax.name, "a scalar or a 1-D list", f"shape {array.shape}")
    if array.ndim == 1 and array.size == 0:
        raise InputError(ax.name, "at least one value", "an empty list")
    return np.asarray(array, dtype=float), requested, array.ndim == 1


class _Grid:
    """The axes of one table: values (1-D for dimensions, 0-d for scalars)."""

    def __init__(self, axes: Mapping[str, object], catalogue=None):
        given: dict[str, object] = {}
        for key, value in axes.items():
            if value is None:
                continue
            ax = axis(key)
            if ax.name in given:
                raise InputError(
                    key,
                    f"given once (it names the same axis as "
                    f"{ax.name if key != ax.name else ax.alias!r})",
                    "twice",
                )
            given[ax.name] = value
        self.values: dict[str, np.ndarray] = {}
        self.requested: dict[str, str] = {}
        self.dims: list[str] = []
        for name, ax in AXES.items():  # canonical order
            if name not in given:
                continue
            values, requested, is_dim = _grid_values(ax, given[name], catalogue)
            self.values[name] = values if is_dim else values.reshape(())
            if requested:
                self.requested[name] = requested
            if is_dim:
                self.dims.append(name)

    def __contains__(self, name):
        return name in self.values

    def dims_of(self, entry: Tabulated) -> list[str]:
        return [d for d in self.dims if d in entry.takes]

    def size_of(self, entry: Tabulated) -> int:
        return math.prod(self.values[d].size for d in self.dims_of(entry))

    def coords(self) -> dict:
        coords = {}
        for name, values in self.values.items():
            ax = AXES[name]
            attrs = {"long_name": ax.long_name}
            if not ax.category:
                attrs["units"] = axis_units(ax)
            if name == "temperature":
                attrs["units_metadata"] = "temperature: on_scale"
            if name in self.requested:
                attrs["requested_units"] = self.requested[name]
            if ax.category:
                values = values.astype(str)
            coords[name] = ((name,) if values.ndim else (), values, attrs)
        return coords

    def describe(self) -> str:
        parts = []
        for name, values in self.values.items():
            ax = AXES[name]
            units = "" if ax.category else f", {ax.units}"
            if values.ndim == 0:
                parts.append(
                    f"{name}={values.item()!r}"
                    if ax.category
                    else f"{name}={values.item():g}{units.replace(',', '')}"
                )
            else:
                parts.append(f"{name}=<{values.size} values{units}>")
        return ", ".join(parts)


def _select(si, grid: _Grid, quantities) -> list[Tabulated]:
    if quantities is None:
        chosen = []
        for name in available(si):
            entry = QUANTITIES[name]
            if not entry.by_default:
                continue
            if not set(entry.takes) & set(grid.values):
                continue
            if not set(entry.required) <= set(grid.values):
                continue
            if entry.wants and not set(entry.wants) & set(grid.values):
                continue
            chosen.append(entry)
        if not chosen:
            raise InputError(
                "quantities",
                "named, or a grid some quantity depends on (e.g. temperature)",
                "none of either",
            )
        return chosen
    names = check_names(quantities)  # one name (not its letters) or several, as text
    if not names:
        raise InputError("quantities", "at least one quantity name", "an empty list")
    entries = []
    serves = available(si)
    for name in names:
        if not isinstance(name, str):
            raise InputError("quantities", "quantity names (strings)", repr(name))
        if name not in QUANTITIES:
            raise UnknownQuantityError(name, QUANTITIES, "for tables")
        name = QUANTITIES.canonical(name)
        if name not in serves:
            raise UnknownQuantityError(name, serves, f"in release {si.release.id}")
        entry = QUANTITIES[name]
        missing = [a for a in entry.required if a not in grid]
        if missing:
            raise InputError(
                missing[0], f"given for {name} ({_axis_hint(AXES[missing[0]])})", "nothing"
            )
        entries.append(entry)
    return entries


def _refuse_or_drop_unused(grid: _Grid, entries: list[Tabulated], named: bool) -> None:
    """An axis no quantity of the table depends on is refused when the quantities were
    named (it would show beside values it did not affect), dropped when they were
    chosen from the axes."""
    used = set().union(*(e.takes for e in entries))
    unused = [name for name in grid.values if name not in used]
    if not unused:
        return
    if named:
        depends = "; ".join(f"{e.name} on {', '.join(e.takes) or 'nothing'}" for e in entries)
        raise InputError(
            unused[0],
            f"left out: no quantity asked for depends on it ({depends})",
            "a value",
        )
    for name in unused:
        del grid.values[name]
        grid.requested.pop(name, None)
        if name in grid.dims:
            grid.dims.remove(name)


def _axis_hint(ax: Axis) -> str:
    if ax.category:
        if not ax.choices:
            return f"one or more {ax.long_name} names"
        return "one or more of " + ", ".join(ax.choices)
    return f"in {ax.units}"


# --------------------------------------------------------------------------- evaluation


def _shape(values: np.ndarray, position: int, ndim: int) -> np.ndarray:
    shape = [1] * ndim
    shape[position] = values.size
    return values.reshape(shape)


def _call_block(si, entry: Tabulated, values: Mapping[str, np.ndarray], dims: list[str]):
    """Evaluate an entry on the outer product of 1-D values (dims) and scalars.

    Returns a list of float arrays (one per output part) of shape [len(d) for d in
    dims] and the pint units of each part.
    """
    categories = [d for d in dims if AXES[d].category]
    numeric = [d for d in dims if not AXES[d].category]
    shape = [values[d].size for d in dims]
    outs: list[np.ndarray] | None = None
    units = None
    for picks in itertools.product(*(range(values[d].size) for d in categories)):
        arguments = {}
        for name in entry.takes:
            if name not in values:
                continue
            vals = values[name]
            if name in categories:
                arguments[name] = str(vals[picks[categories.index(name)]])
            elif name in numeric:
                arguments[name] = _shape(vals, numeric.index(name), len(numeric))
            else:
                arguments[name] = str(vals.item()) if AXES[name].category else vals.item()
            if name in NEEDS_UNIT:  # the method takes it only with its unit
                from ..units import Q_

                arguments[name] = Q_(arguments[name], AXES[name].units)
        result = entry.call(si, arguments)
        if isinstance(result, tuple):
            parts = result
        elif entry.fields:
            parts = tuple(getattr(result, name) for name in entry.fields)
        else:
            parts = (result,)
        if outs is None:
            units = [p.units for p in parts]
            outs = [np.empty(shape) for _ in parts]
        index = tuple(picks[categories.index(d)] if d in categories else slice(None) for d in dims)
        sub_shape = [values[d].size for d in numeric]
        for out, part, unit in zip(outs, parts, units, strict=True):
            magnitude = part.m_as(unit) if part.units != unit else part.magnitude
            out[index] = np.broadcast_to(np.asarray(magnitude, dtype=float), sub_shape)
    return outs, units


def _check_extremes(si, entry: Tabulated, grid: _Grid, dims: list[str]):
    """Evaluate on each numeric axis's extremes: the validity checks see the same
    minimum and maximum as on the full grid (warning, or error if strict), and the
    result gives the output units."""
    values = {}
    for name in entry.takes:
        if name not in grid:
            continue
        vals = grid.values[name]
        if name in dims and not AXES[name].category and vals.size > 2:
            vals = np.array([vals.min(), vals.max()])
        values[name] = vals
    return _call_block(si, entry, values, dims)[1]


def _blocks(shape: list[int], numeric: list[int]):
    """Slices of the grid along its largest numeric dimension, ~BLOCK points each."""
    total = math.prod(shape)
    if total <= BLOCK or not numeric:
        yield None, slice(None)
        return
    along = max(numeric, key=lambda i: shape[i])
    rest = total // shape[along]
    step = max(1, BLOCK // max(rest, 1))
    for start in range(0, shape[along], step):
        yield along, slice(start, min(start + step, shape[along]))


def _evaluate(si, entry: Tabulated, grid: _Grid, progress=None, done=0, total=0):
    dims = grid.dims_of(entry)
    values = {n: grid.values[n] for n in entry.takes if n in grid}
    if math.prod(values[d].size for d in dims) <= BLOCK:
        outs, units = _call_block(si, entry, values, dims)
        if progress:
            progress(done + outs[0].size, total)
        return dims, outs, units
    units = _check_extremes(si, entry, grid, dims)  # warns once, or raises if strict
    # the blocks are evaluated by a view that knows the extremes were checked (no
    # warning filter: another thread's warnings must still arrive)
    outs = _in_blocks(si._checked_already(), entry, values, dims, units, progress, done, total)
    return dims, outs, units


def _in_blocks(si, entry, values, dims, units, progress=None, done=0, total=0):
    """Evaluate block by block into preallocated outputs (linear time and memory)."""
    shape = [values[d].size for d in dims]
    numeric = [i for i, d in enumerate(dims) if not AXES[d].category]
    outs = [np.empty(shape) for _ in units]
    for along, part in _blocks(shape, numeric):
        sub = dict(values)
        index = [slice(None)] * len(dims)
        if along is not None:
            sub[dims[along]] = values[dims[along]][part]
            index[along] = part
        block, block_units = _call_block(si, entry, sub, dims)
        for out, b, u, want in zip(outs, block, block_units, units, strict=True):
            out[tuple(index)] = b if u == want else _convert(b, u, want)
        done += block[0].size
        if progress:
            progress(done, total)
    return outs


def _convert(values, unit, target):
    from ..units import Q_

    return Q_(values, unit).m_as(target)


# --------------------------------------------------------------------------- lazy


@functools.lru_cache(maxsize=8)
def _rebuild(recipe):
    """A material from its recipe (class, release, overrides, strictness, catalogue
    key), once per process: dask workers rebuild it instead of unpickling a bound one.
    (The catalogue crosses as its folders and digests, plain data with a deterministic
    repr: the shared one of this process.)"""
    from ..catalogue.overlay import from_key

    material, key, release, overrides, strict = recipe
    catalogue = from_key(key)  # an overlay whose files differ here is refused (an error)
    return material(release=release, models=dict(overrides), strict=strict, catalogue=catalogue)


def _recipe(si):
    from ..catalogue.overlay import key_of

    overrides = tuple(sorted((q, m) for q, m in si.models.items() if q in si.overridden))
    return (type(si), key_of(si.catalogue.base), si.release.id, overrides, si.strict)


@functools.lru_cache(maxsize=8)
def _verified(recipe, digests):
    """The material of a recipe, once its data files were found to have the digests
    of the process that made the lazy table (a DatasetError, raised in the task and
    sent back to the client, when they differ)."""
    si = _rebuild(recipe)
    mismatch = si._digest_mismatch(dict(digests))
    if mismatch is not None:
        raise mismatch
    return si


class _BlockFunction:
    """Picklable block evaluator for dask: every output part of one quantity on one block.

    ``xr.apply_ufunc`` hands it one block of each dimension's coordinate, broadcast
    against the others (length 1 along every other axis): their values are the 1-D
    axes of the block's outer product. It carries the recipe of the material and the
    digests of every data file the material reads, and checks them on its first call
    in a worker (never while being unpickled: an error there would hang the client).
    """

    def __init__(self, recipe, quantity, dims, scalars, all_units, digests=()):
        self.recipe, self.quantity, self.dims = recipe, quantity, dims
        self.scalars, self.all_units = scalars, all_units
        self.digests = digests

    def __dask_tokenize__(self):
        # deterministic: the same recipe, data, quantity and fixed axes give the same keys
        scalars = sorted((k, np.asarray(v).tolist()) for k, v in self.scalars.items())
        return ("matprops", repr(self.recipe), self.digests, self.quantity, self.dims, scalars)

    def __call__(self, *blocks):
        # validity was checked on the grid's extremes before the graph was made: the
        # worker's view skips the checks (no warning filter is touched)
        si = _verified(self.recipe, self.digests)._checked_already()
        values = dict(self.scalars)
        values.update(
            (d, np.asarray(b).reshape(-1)) for d, b in zip(self.dims, blocks, strict=True)
        )
        entry = QUANTITIES[self.quantity]
        if math.prod(values[d].size for d in self.dims) <= BLOCK:
            outs, got = _call_block(si, entry, values, self.dims)
            outs = [
                out if unit == want else _convert(out, unit, want)
                for out, unit, want in zip(outs, got, self.all_units, strict=True)
            ]
        else:
            outs = _in_blocks(si, entry, values, self.dims, self.all_units)
        return tuple(outs) if len(outs) > 1 else outs[0]


def _chunk_sizes(chunks, dims: list[str], grid: _Grid) -> dict[str, int]:
    if isinstance(chunks, Mapping):
        sizes = {}
        for key, value in chunks.items():
            sizes[axis(key).name] = value
    elif isinstance(chunks, (int, np.integer)) and not isinstance(chunks, bool):
        sizes = dict.fromkeys(dims, int(chunks))
    else:
        raise InputError("chunks", "a positive integer or a mapping axis -> integer", repr(chunks))
    out = {}
    for d in dims:
        size = sizes.get(d, grid.values[d].size)
        if isinstance(size, bool) or not isinstance(size, (int, np.integer)) or size < 1:
            raise InputError("chunks", f"a positive integer for {d}", repr(size))
        out[d] = min(int(size), grid.values[d].size) if not AXES[d].category else 1
    return out


def _evaluate_lazy(si, entry: Tabulated, grid: _Grid, chunks):
    """Lazy dask-backed parts of one quantity through ``xr.apply_ufunc(...,
    dask="parallelized")``: one call of :class:`_BlockFunction` per block of the
    grid's outer product, on any dask scheduler (threads, a distributed cluster)."""
    import xarray as xr

    dims = grid.dims_of(entry)
    units = _check_extremes(si, entry, grid, dims)  # warns or raises now, not in workers
    sizes = _chunk_sizes(chunks, dims, grid)
    scalars = {n: grid.values[n] for n in entry.takes if n in grid and n not in dims}
    axes = [xr.DataArray(grid.values[d], dims=(d,)).chunk({d: sizes[d]}) for d in dims]
    digests = tuple(sorted(si._data_digests().items()))
    parts = xr.apply_ufunc(
        _BlockFunction(_recipe(si), entry.name, tuple(dims), scalars, units, digests),
        *axes,
        dask="parallelized",
        output_dtypes=[float] * len(units),
        output_core_dims=[[] for _ in units] if len(units) > 1 else [[]],
    )
    parts = parts if isinstance(parts, tuple) else (parts,)
    return dims, [part.transpose(*dims).data for part in parts], units


# --------------------------------------------------------------------------- table


def table(
    si,
    quantities: Iterable[str] | str | None = None,
    *,
    chunks=None,
    progress: Callable[[int, int], None] | None = None,
    uncertainty: bool = False,
    samples: int | None = None,
    seed: int = 0,
    max_values: int | None = MAX_VALUES,
    **axes,
):
    """Evaluate quantities of ``si`` on a grid -> :class:`xarray.Dataset`.

    Parameters
    ----------
    si : matprops.Silicon
    quantities : names from :data:`QUANTITIES` (default: every quantity of the release
        whose required axes are given and which depends on a given axis)
    **axes : grid axes by name or alias, each a scalar (a scalar coordinate), a 1-D
        list or array (a dimension), or a pint quantity (``25 degC`` works):
        ``temperature``/``T`` [K], ``acceptor_density``/``Na``, ``donor_density``/``Nd``,
        ``excess_density``/``excess``, ``electron_density``/``n``,
        ``hole_density``/``p`` [cm^-3], ``wavelength`` [nm, or photon energy],
        ``carrier`` ("electron", "hole"), ``plane`` ("100", "110", "111")
    chunks : int or mapping axis -> int, optional
        Return a lazy dask-backed Dataset with these chunk sizes (validity is
        checked now, on the grid's extremes; values are computed by dask).
    progress : callable(done_points, total_points), optional
        Called as blocks of a large grid are evaluated (the command line draws a bar).
    uncertainty : bool
        Add ``<variable>_uncertainty`` (standard uncertainty from the sources' stated
        coefficient uncertainties; NaN where none is stated) and
        ``<variable>_model_spread`` (over the catalogue's models valid at each point),
        linked by CF ``ancillary_variables``; ``samples`` and ``seed`` of Monte Carlo
        draws (see :mod:`matprops.material.uncertainty`). Not with ``chunks``.
    max_values : int or None
        Most values (grid points times outputs, summed over the quantities; three
        times that with ``uncertainty``) evaluated in memory, :data:`MAX_VALUES` (1e8,
        0.8 GB) by default; ``None`` for no limit. A lazy table (``chunks=``) is not
        held in memory and is not limited.

    Raises
    ------
    matprops.InputError
        For a grid larger than ``max_values`` (before anything is allocated: the size is
        the product of the axes' lengths), naming its size and how to go beyond it.

    Returns
    -------
    xarray.Dataset whose dimensions are the 1-D axes given, in the order of
    :data:`AXES`; each variable spans the dimensions its quantity depends on.

    Examples
    --------
    >>> si = matprops.silicon()                                   # doctest: +SKIP
    >>> si.table(["band_gap", "absorption"], T=Q_([25, 85], "degC"),
    ...          wavelength=range(400, 1101, 50))                 # doctest: +SKIP
    """
    import xarray as xr

    from .._version import __version__

    grid = _Grid(axes, si.catalogue)
    entries = _select(si, grid, quantities)
    _refuse_or_drop_unused(grid, entries, named=quantities is not None)
    eager = [e for e in entries if chunks is None or not grid.dims_of(e)]
    if uncertainty:
        check_size(grid, eager, max_values, 3, "parts: value, uncertainty and model spread")
    else:
        check_size(grid, eager, max_values)
    names_asked = [e.name for e in entries]
    total = sum(grid.size_of(e) for e in entries)
    variables = {}  # the Dataset is built once at the end: each __setitem__ is a merge
    done = 0
    for entry in entries:
        if chunks is not None and grid.dims_of(entry):
            dims, outs, units = _evaluate_lazy(si, entry, grid, chunks)
        else:
            dims, outs, units = _evaluate(si, entry, grid, progress, done, total)
            done += grid.size_of(entry)
        provenance = _provenance_json(si, entry.name)
        model = si.models.get(entry.name, "derived")
        for (variable, long_name), values, unit in zip(entry.outputs, outs, units, strict=True):
            if variable in grid.values or variable in variables:
                raise InputError(
                    "quantities",
                    f"quantities whose variables are not also axes or other variables "
                    f"({variable!r} is both: tabulate {entry.name} separately)",
                    repr(names_asked),
                )
            variables[variable] = (
                tuple(dims),
                values,
                {
                    "units": cf_units(unit),
                    "long_name": long_name,
                    "quantity": entry.name,
                    "model": model,
                    "provenance": provenance,
                },
            )
    data = xr.Dataset(variables, coords=grid.coords())
    if uncertainty:
        if chunks is not None:
            raise InputError("uncertainty", "used without chunks= (an eager table)", True)
        from .uncertainty import table_figures

        data = table_figures(si, data, entries, grid, _call_block, samples=samples, seed=seed)
    data = _with_validity(si, data, entries)
    names = [e.name for e in entries]
    data.attrs.update(
        {
            "Conventions": "CF-1.11",
            "title": "Crystalline-silicon parameters from matprops",
            "source": f"matprops {__version__}, release {si.release.id} ({si.release.status})",
            "references": si.cite(
                format="text",
                quantities=list(dict.fromkeys(q for e in entries for q in e.model_quantities())),
            ),
            "history": f"matprops {__version__}: si.table({names!r}, {grid.describe()}"
            f"{f', chunks={chunks!r}' if chunks is not None else ''}"
            f"{', uncertainty=True' if uncertainty else ''})",
            "release": si.release.id,
            "release_status": si.release.status,
            "comment": "Model estimates; for decisions with consequences defer to measured "
            "data, local codes and licensed practice.",
        }
    )
    return data


def _with_validity(si, data, entries):
    """Each variable with its ``<name>_validity`` flags (see :mod:`.validity`)."""
    from .validity import attributes, flags

    extra = {}
    for entry in entries:
        coords = {c: data[c] for c in data.coords if c in entry.takes}
        for variable, long_name in entry.outputs:
            flag, left = flags(
                si,
                entry.model_quantities(),
                data[variable],
                data[variable].dims,
                coords,
                entry.name,
            )
            extra[f"{variable}_validity"] = flag.assign_attrs(
                attributes(variable, long_name, left, entry.name)
            )
            linked = data[variable].attrs.get("ancillary_variables", "")
            data[variable].attrs["ancillary_variables"] = f"{linked} {variable}_validity".strip()
    return data.assign(extra)


def values_in(grid: _Grid, entries, copies: int = 1) -> int:
    """How many values a table of these entries holds (grid points x outputs)."""
    return copies * sum(grid.size_of(e) * len(e.outputs) for e in entries)


def check_size(
    grid: _Grid, entries, max_values: int | None, copies: int = 1, copies_of: str = ""
) -> None:
    """An InputError for a table of more than ``max_values`` values, before any work."""
    if max_values is None:
        return
    if isinstance(max_values, bool) or not isinstance(max_values, (int, np.integer)):
        raise InputError("max_values", "a positive integer or None", repr(max_values))
    count = values_in(grid, entries, copies)
    if count <= max_values:
        return
    axes = " x ".join(f"{grid.values[d].size} {d}" for d in grid.dims) or "scalars"
    raise InputError(
        "grid",
        f"at most {max_values:.3g} values in memory (max_values=None, or --allow-large on "
        "the command line, goes beyond; chunks= makes a lazy table)",
        f"{count:.3g} values ({axes}, {len(entries)} quantit{'y' if len(entries) == 1 else 'ies'}"
        f"{f', {copies} {copies_of}' if copies > 1 else ''}; {8 * count / 1e9:.3g} GB)",
    )


def _provenance_json(si, name: str) -> str:
    """The provenance of a quantity as JSON, made once per material and quantity (a
    small table spent a fifth of its time writing it)."""
    cache = si.__dict__.setdefault("_table_provenance", {})
    text = cache.get(name)
    if text is None:
        text = cache[name] = _provenance_text(si, name)
    return text


def _provenance_text(si, name: str) -> str:
    try:
        record = si.provenance(name)
    except UnknownQuantityError:
        record = {
            "quantity": name,
            "release": si.release.id,
            "models": {q: si.models.get(q) for q in QUANTITIES[name].model_quantities()},
        }
    return json.dumps(record, ensure_ascii=False)


# --------------------------------------------------------------------------- compare


def _overrides(si) -> dict[str, str]:
    return {q: m for q, m in si.models.items() if q in si.overridden}


def _compare_one(variant, quantity, chunks, progress, axes):
    """One model's table for a comparison -> (table or None, note).

    A model with no coefficients for a carrier or species asked for (an electrons-only
    mobility) gives NaN there (flag 2, no value) and a note; with none of them, None."""
    from ..errors import UnknownVariantError

    try:
        return (
            table(variant, [quantity], chunks=chunks, progress=progress, max_values=None, **axes),
            "",
        )
    except UnknownVariantError as exc:
        missing = exc
    grid = _Grid(axes, variant.catalogue)
    category = next(
        (d for d in ("carrier", "dopant") if d in grid and missing.name in grid.values[d]), None
    )
    covered = [str(v) for v in missing.known]
    note = f"has no {missing.kind} {missing.name!r} (covers {', '.join(covered)})"
    if category is None or grid.values[category].ndim == 0:
        return None, f"skipped: {note}"
    asked = [str(v) for v in grid.values[category]]
    inside = [v for v in asked if v in covered]
    if not inside:
        return None, f"skipped: {note}"
    given = {k: v for k, v in axes.items() if axis(k).name != category}
    part = table(
        variant,
        [quantity],
        chunks=chunks,
        progress=progress,
        max_values=None,
        **given,
        **{category: inside},
    )
    filled = part.reindex({category: asked})
    for name in [n for n in filled.data_vars if n.endswith("_validity")]:
        filled[name] = filled[name].fillna(2).astype(np.int8).assign_attrs(part[name].attrs)
    filled[category].attrs.update(part[category].attrs)
    return filled, f"{note}: NaN there"


def compare(
    si,
    quantity: str,
    models: Iterable[str] | None = None,
    *,
    chunks=None,
    progress=None,
    max_values: int | None = MAX_VALUES,
    **axes,
):
    """Evaluate several models of one quantity on the same grid.

    Parameters
    ----------
    si : matprops.Silicon (its release, other model choices and strictness are kept)
    quantity : a quantity with model files (``matprops.models()`` lists them)
    models : model ids (default: every model of the quantity)
    **axes, chunks, progress, max_values : as for :func:`table` (the values of every
        model's table count towards ``max_values``)

    Returns
    -------
    xarray.Dataset with a ``model`` dimension (and a ``citation`` coordinate along
    it), the quantity's variables, and for each variable ``<name>_spread`` (largest
    minus smallest model value at each grid point, same units) and
    ``<name>_relative_spread`` (that spread over the mean of the absolute values).
    Models outside their validity warn as usual; table models give NaN where
    they have no data, and the spread skips them.
    """
    import xarray as xr

    quantity = check_name(quantity, "quantity")
    if quantity not in si.catalogue.quantities() or quantity not in QUANTITIES:
        comparable = [q for q in si.catalogue.quantities() if q in QUANTITIES]
        raise UnknownQuantityError(quantity, comparable, "with models to compare")
    known = si.catalogue.model_ids(quantity)
    ids = list(known) if models is None else check_names(models, "models")
    if not ids:
        raise InputError("models", "at least one model id", "an empty list")
    for model_id in ids:
        if model_id not in known:
            raise UnknownModelError(model_id, known, f"for quantity {quantity!r}")
    if len(set(ids)) != len(ids):
        raise InputError("models", "distinct model ids", repr(ids))
    if chunks is None:  # every model's table, before any is evaluated
        grid = _Grid(axes, si.catalogue)
        check_size(grid, [QUANTITIES[quantity]], max_values, len(ids), "models")
    parts, citations, provenance, skipped, kept = [], [], {}, {}, []
    for model_id in ids:
        variant = si._sibling({**_overrides(si), quantity: model_id})
        data, note = _compare_one(variant, quantity, chunks, progress, axes)
        if note:
            skipped[model_id] = note
        if data is None:
            continue
        kept.append(model_id)
        parts.append(data)
        citations.append(variant.model(quantity).source.citation())
        provenance[model_id] = variant.provenance(quantity)
    if not parts:
        raise InputError(
            "models",
            f"models of {quantity} that cover the grid asked for",
            "; ".join(f"{m}: {n}" for m, n in skipped.items()),
        )
    for model_id, note in skipped.items():
        message = f"compare {quantity}: {model_id} {note}"
        if getattr(si, "_report", None) is not None:  # the application's reporter
            si._report(message)
        else:
            warn(message, SkippedModelWarning)
    ids = kept
    combined = xr.concat(
        parts,
        dim="model",
        data_vars="all",
        coords="minimal",
        compat="override",
        combine_attrs="override",
    )
    combined = combined.assign_coords(
        model=("model", np.asarray(ids, dtype=str), {"long_name": "model id"}),
        citation=("model", np.asarray(citations, dtype=str), {"long_name": "source of the model"}),
    )
    for name, _ in QUANTITIES[quantity].outputs:
        variable = combined[name]
        variable.attrs.update(
            {"model": ", ".join(ids), "provenance": json.dumps(provenance, ensure_ascii=False)}
        )
        # only the models inside their validity range at a point count there; NaN (a
        # table model without data) is skipped, a point with no valid model stays NaN
        # (written without nanmax, which warns there)
        valid = variable.where(combined[f"{name}_validity"] == 0)
        count = valid.notnull().sum("model")
        anywhere = count > 0
        high = valid.fillna(-np.inf).max("model").where(anywhere)
        low = valid.fillna(np.inf).min("model").where(anywhere)
        spread = high - low
        scale = abs(valid).fillna(0.0).sum("model") / count.where(anywhere)
        relative = spread / scale.where(scale != 0)
        count = count.astype(np.int16)
        combined[f"{name}_spread"] = spread.assign_attrs(
            {
                "units": variable.attrs["units"],
                "long_name": f"spread (largest minus smallest) across the models valid "
                f"at the point: {variable.attrs['long_name']}",
                "quantity": quantity,
                "comment": "models outside their validity range at a point (flag 1) or "
                "without a value there (flag 2) are left out; NaN where no model is valid",
            }
        )
        combined[f"{name}_relative_spread"] = relative.assign_attrs(
            {
                "units": "1",
                "long_name": f"spread across the models valid at the point over their "
                f"mean absolute value: {variable.attrs['long_name']}",
                "quantity": quantity,
            }
        )
        count.attrs = {}  # not flags: a count
        combined[f"{name}_valid_models"] = count.assign_attrs(
            {
                "units": "1",
                "long_name": f"number of models valid at the point: {variable.attrs['long_name']}",
                "quantity": quantity,
            }
        )
    from .._version import __version__

    combined.attrs["default_model"] = si.models.get(quantity, "")  # the material's choice
    if skipped:
        combined.attrs["skipped_models"] = "; ".join(f"{m}: {n}" for m, n in skipped.items())
    combined.attrs.update(
        {
            "title": f"Models of {quantity} compared (matprops)",
            "references": "\n".join(f"[{m}] {c}" for m, c in zip(ids, citations, strict=True)),
            "history": f"matprops {__version__}: si.compare({quantity!r}, models={ids!r}, "
            f"{_Grid(axes).describe()})",
        }
    )
    return combined
