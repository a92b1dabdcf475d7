"""Prepared optical tables: the same function as the tables' definitions.

Every table model of absorption and refractive index is evaluated through a
:class:`matprops.kernels._tables.GridTable` prepared once (the combined models on the
union of their tables' wavelength grids). These are REGRESSION tests: they compare
that fast path with the definitions the kernels write out (``absorption.
table_scaled_by_series`` ...), evaluated from the same tables, at 1e-12 relative
(the issue's requirement), including where each returns NaN.
"""

import functools

import numpy as np
import pytest

from matprops.catalogue.fields import convert as _convert
from matprops.catalogue.fields import udunits_to_pint
from matprops.catalogue.store import default_catalogue
from matprops.kernels._tables import Locator

CATALOG = default_catalogue()
TABLE_MODELS = [
    (q, m)
    for q in ("absorption", "refractive_index")
    for m in CATALOG.model_ids(q)
    if CATALOG.model(q, m).kind == "table"
]


def _definition(model):
    """The kernel as defined (not prepared), bound to the same table arrays."""
    function = model.function
    spec = model.kernel.spec
    arrays = {}
    for argument, reference in function._arguments.items():
        table, _, variable = reference.rpartition(":")
        values, units = CATALOG.table_arrays(table or function._table)[variable]
        arrays[argument] = _convert(
            model.path, argument, values, udunits_to_pint(units), spec.coefficients[argument]
        )
    return functools.partial(model.kernel, **function._bound, **arrays), arrays


@pytest.mark.parametrize("quantity, model_id", TABLE_MODELS)
def test_prepared_table_equals_its_definition(quantity, model_id):
    # regression check against the definition, 1e-12 relative, NaN where it is NaN
    model = CATALOG.model(quantity, model_id)
    definition, arrays = _definition(model)
    rng = np.random.default_rng(12)
    lam = rng.uniform(200.0, 1500.0, 70_000)  # beyond both ends of every table
    t = rng.uniform(0.0, 520.0, 70_000)
    grid = arrays["wavelength_grid"]
    cases = [
        (lam, t),
        (lam[:300, None], t[None, :250]),
        (lam[None, :300], t[:250, None]),
        (lam, 300.0),
        (lam, np.array([412.3])),
        (800.0, 300.0),
        (grid, 300.0),
        (grid[:, None], np.array([10.0, 300.0, 500.0])),
        (lam[:40], t[:30, None, None]),
    ]
    series = arrays.get("temperature_grid", arrays.get("series_temperature_grid"))
    if series is not None:  # every node of both grids, at every tabulated temperature
        cases += [(grid[:, None], series[None, :]), (grid, series[:, None])]
    for wavelength, temperature in cases:
        fast = np.asarray(model(wavelength=wavelength, temperature=temperature))
        exact = np.asarray(definition(wavelength, temperature))
        assert fast.shape == exact.shape
        np.testing.assert_array_equal(np.isnan(fast), np.isnan(exact))
        np.testing.assert_allclose(fast, exact, rtol=1e-12, atol=0, equal_nan=True)


def test_large_inputs_take_the_blocked_paths(si):
    # regression check: 2e5 scattered pairs and a 400 x 400 grid (above the block size)
    model = si.model("absorption")
    definition, _ = _definition(model)
    rng = np.random.default_rng(3)
    lam, t = rng.uniform(300.0, 1150.0, 200_000), rng.uniform(250.0, 450.0, 200_000)
    np.testing.assert_allclose(model(wavelength=lam, temperature=t), definition(lam, t), rtol=1e-12)
    lam, t = np.linspace(300.0, 1150.0, 400), np.linspace(250.0, 450.0, 400)
    np.testing.assert_allclose(
        model(wavelength=lam[:, None], temperature=t), definition(lam[:, None], t), rtol=1e-12
    )
    out = np.empty((400, 400), dtype=np.float32)
    assert si.kernel("absorption")(lam[:, None], t, out=out) is out
    np.testing.assert_allclose(out, definition(lam[:, None], t), rtol=1e-6)


@pytest.mark.parametrize(
    "grid",
    [
        np.linspace(250.0, 1450.0, 121),
        np.array([1.0, 1.0 + 1e-10, 2.0, 2.0 + 1e-7, 5.0]),  # nearly coincident nodes
        np.sort(np.random.default_rng(5).uniform(0.0, 1.0, 1000)),
        np.array([0.0, 1.0]),
    ],
)
def test_locator_is_searchsorted(grid):
    # the cell index without a binary search is exactly numpy's (common practice:
    # searchsorted(grid, x, "right") - 1, clipped to the grid's cells)
    x = np.concatenate(
        [
            np.random.default_rng(1).uniform(grid[0] - 1, grid[-1] + 1, 50_000),
            grid,
            np.nextafter(grid, np.inf),
            np.nextafter(grid, -np.inf),
        ]
    )
    expected = np.clip(np.searchsorted(grid, x, side="right") - 1, 0, grid.size - 2)
    np.testing.assert_array_equal(Locator(grid).locate(x), expected)
