"""Frozen reference evaluations of a release, and the command that makes them.

Each release ``datasets/releases/<id>.toml`` has a companion
``<id>.reference.json``: its models evaluated through the public API on a fixed
grid and, for every table model, at every stored point of its table (each
tabulated wavelength at each tabulated temperature); a digest of the numbers of
every table file its models read; and the sha256 of every model file it pinned.
Tests re-evaluate and compare to 1e-12 relative and recompute the digests, so a
change of code or data that moves a released number cannot pass unnoticed, not
even at a wavelength between the points of the fixed grid.

The table digest covers the decoded numbers (every variable's name, units, shape
and float64 values), not the file bytes: netCDF files record library versions in
hidden attributes, so a rebuild with other library versions changes the bytes
but not the numbers.

While a release is a draft, its reference may be regenerated deliberately (and
the diff reviewed in the commit)::

    python -m matprops.outputs.reference regenerate 2026.1

Once its status is ``final`` the command refuses: corrections make a new release.
"""

from __future__ import annotations

import hashlib
import json
import sys
import warnings
from pathlib import Path

import numpy as np

from ..catalogue.store import (
    Catalog,
    _atomic_write_text,
    default_catalog,
    sha256_of,
)
from ..errors import Error, ReleaseFrozenError

__all__ = ["CASES", "compare", "evaluate", "regenerate", "table_digest"]

TEMPERATURES = [
    50.0,
    77.0,
    150.0,
    200.0,
    233.15,
    250.0,
    273.15,
    298.15,
    300.0,
    350.0,
    400.0,
    473.15,
    500.0,
    600.0,
]

WAVELENGTHS = [
    260.0,
    300.0,
    365.0,
    400.0,
    500.0,
    600.0,
    700.0,
    800.0,
    900.0,
    1000.0,
    1050.0,
    1100.0,
    1150.0,
    1180.0,
    1300.0,
    1450.0,
]
OPTICAL_TEMPERATURES = [80.0, 250.0, 295.0, 300.0, 350.0, 473.15]
TRANSPORT_TEMPERATURES = [77.0, 150.0, 250.0, 300.0, 350.0, 400.0, 500.0]
DOPINGS = [0.0, 1e14, 1e16, 1e18, 1e20]

LIFETIME_TEMPERATURES = [250.0, 298.15, 300.0, 350.0]
LIFETIME_DOPING = [1e13, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20]
EXCESS = [0.0, 1e12, 1e14, 1e15, 1e16, 1e17]

# (case label, Silicon method, fixed keyword arguments, gridded arguments)
# Gridded arguments are combined as an outer product in the order given.
DOPANTS = {"Nd": [0.0, 1e14, 1e16, 1e18, 3e19, 1e20], "Na": [0.0, 1e15, 1e17, 1e19]}
DOPING_GRID = {"temperature": [250.0, 300.0, 350.0], **DOPANTS}

CASES = [
    ("band_gap", "band_gap", {}, {"temperature": TEMPERATURES}),
    ("densities_of_states", "densities_of_states", {}, {"temperature": TEMPERATURES}),
    ("intrinsic_density", "intrinsic_density", {}, {"temperature": TEMPERATURES}),
    ("lattice_constant", "lattice_constant", {}, {"temperature": TEMPERATURES}),
    ("density", "density", {}, {"temperature": TEMPERATURES}),
    ("atomic_density", "atomic_density", {}, {"temperature": TEMPERATURES}),
    ("molar_mass", "molar_mass", {}, {}),
    ("permittivity", "permittivity", {}, {}),
    *[
        (
            f"surface_atom_density_{p}",
            "surface_atom_density",
            {"plane": p},
            {"temperature": [300.0]},
        )
        for p in ("100", "110", "111")
    ],
    *[
        (
            f"dangling_bond_density_{p}",
            "dangling_bond_density",
            {"plane": p},
            {"temperature": [300.0]},
        )
        for p in ("100", "110", "111")
    ],
    (
        "absorption",
        "absorption",
        {},
        {"wavelength": WAVELENGTHS, "temperature": OPTICAL_TEMPERATURES},
    ),
    (
        "refractive_index",
        "refractive_index",
        {},
        {"wavelength": WAVELENGTHS, "temperature": OPTICAL_TEMPERATURES},
    ),
    (
        "free_carrier_absorption",
        "free_carrier_absorption",
        {},
        {
            "wavelength": [1000.0, 1300.0, 1450.0, 1550.0, 2000.0, 5000.0],
            "n": [0.0, 1e16, 1e19],
            "p": [0.0, 1e16, 1e19],
        },
    ),
    ("gap_narrowing", "gap_narrowing", {}, DOPING_GRID),
    (
        "band_edge_shifts",
        "band_edge_shifts",
        {},
        {
            "temperature": [250.0, 300.0, 400.0],
            "Nd": [0.0, 1e18, 1e20],
            "Na": [0.0, 1e17],
            "n": [1e10, 1e18, 1e20],
            "p": [1e3, 1e16, 1e19],
        },
    ),
    ("effective_intrinsic_density", "effective_intrinsic_density", {}, DOPING_GRID),
    (
        "equilibrium",
        "equilibrium",
        {},
        {"temperature": [77.0, 200.0, 300.0, 400.0, 500.0], **DOPANTS},
    ),
    (
        "equilibrium_boltzmann",
        "equilibrium",
        {"statistics": "boltzmann"},
        {"temperature": [300.0], **DOPANTS},
    ),
    *[
        (f"thermal_velocity_{c}", "thermal_velocity", {"carrier": c}, {"temperature": TEMPERATURES})
        for c in ("electron", "hole")
    ],
    ("radiative_coefficient", "radiative_coefficient", {}, {"temperature": TEMPERATURES}),
    (
        "intrinsic_lifetime_n_type",
        "intrinsic_lifetime",
        {},
        {"temperature": LIFETIME_TEMPERATURES, "Nd": LIFETIME_DOPING, "excess": EXCESS},
    ),
    (
        "intrinsic_lifetime_p_type",
        "intrinsic_lifetime",
        {},
        {"temperature": LIFETIME_TEMPERATURES, "Na": LIFETIME_DOPING, "excess": EXCESS},
    ),
    (
        "auger_lifetime_n_type",
        "auger_lifetime",
        {},
        {"temperature": [300.0], "Nd": LIFETIME_DOPING, "excess": EXCESS},
    ),
    (
        "effective_lifetime",
        "effective_lifetime",
        {"defect": "iron-boron-pair", "density": 1e11},
        {"temperature": [300.0], "Na": [1e15, 1e16], "excess": EXCESS},
    ),
    (
        "implied_voltage",
        "implied_voltage",
        {"thickness": 0.018},
        {"temperature": [298.15, 300.0], "Na": [1e15, 1e16], "generation": [1e15, 1e17, 2.5e17]},
    ),
    *[
        (
            f"saturation_velocity_{c}",
            "saturation_velocity",
            {"carrier": c},
            {"temperature": TEMPERATURES},
        )
        for c in ("electron", "hole")
    ],
    (
        "mobility_electron_arsenic",
        "mobility",
        {"carrier": "electron", "donor": "arsenic"},
        {"temperature": [250.0, 300.0, 400.0], "Nd": [1e15, 1e17, 1e19, 1e20]},
    ),
    *[
        (
            f"mobility_{c}",
            "mobility",
            {"carrier": c},
            {"temperature": TRANSPORT_TEMPERATURES, "Na": DOPINGS, "Nd": DOPINGS},
        )
        for c in ("electron", "hole")
    ],
    *[
        (
            f"high_field_mobility_{c}",
            "high_field_mobility",
            {"carrier": c},
            {
                "field": [0.0, 1e3, 1e4, 3e4, 6e4],
                "temperature": [250.0, 300.0, 400.0],
                "Nd": [1e15, 1e18],
            },
        )
        for c in ("electron", "hole")
    ],
    *[
        (
            f"diffusivity_{c}",
            "diffusivity",
            {"carrier": c},
            {
                "temperature": [250.0, 300.0, 400.0],
                "Na": [0.0, 1e17, 1e20],
                "Nd": [0.0, 1e15, 1e20],
            },
        )
        for c in ("electron", "hole")
    ],
    (
        "resistivity",
        "resistivity",
        {},
        {"temperature": TRANSPORT_TEMPERATURES, "Na": DOPINGS, "Nd": DOPINGS},
    ),
    *[
        (
            f"doping_from_resistivity_{d}",
            "doping_from_resistivity",
            {"dopant": d},
            {"resistivity": [1e-3, 0.1, 1.0, 10.0, 1e3], "temperature": [250.0, 300.0, 400.0]},
        )
        for d in ("boron", "phosphorus")
    ],
    *[
        (
            f"standard_resistivity_{d}",
            "resistivity",
            {"conversion": "standard"},
            {"temperature": [296.15], kind: [1e12, 1e14, 1e16, 1e18, 1e20]},
        )
        for d, kind in (("boron", "Na"), ("phosphorus", "Nd"))
    ],
    *[
        (
            f"standard_dopant_density_{d}",
            "doping_from_resistivity",
            {"dopant": d, "conversion": "standard"},
            {"resistivity": [1e-3, 0.1, 1.0, 10.0, 1e3], "temperature": [296.15]},
        )
        for d in ("boron", "phosphorus")
    ],
]


# Silicon methods named otherwise than the quantity whose model they evaluate
_METHOD_QUANTITIES = {"band_edge_shifts": ("gap_narrowing",), "dopant_level": ("ionisation",)}


# the standard's conversions are models of their own, reached through these methods
_STANDARD = {
    "resistivity": ("standard_resistivity",),
    "doping_from_resistivity": ("standard_dopant_density",),
}


def _needs(method: str, fixed: dict | None = None) -> tuple[str, ...]:
    """The quantities whose models a case evaluates."""
    from ..material.derived import DERIVED

    if (fixed or {}).get("conversion") == "standard" and method in _STANDARD:
        return _STANDARD[method]
    if method in _METHOD_QUANTITIES:
        return _METHOD_QUANTITIES[method]
    return DERIVED[method][0] if method in DERIVED else (method,)


def _table_cases(si) -> list:
    """One case per table model: every stored wavelength (inside the model's range)
    at every stored temperature of its tables (or its validity limits if its table
    holds one temperature)."""
    cases = []
    for quantity, model in sorted(si._models.items()):
        if model.kind != "table":
            continue
        arrays = {name: si.catalog.table_arrays(name) for name in model.tables}
        wavelength = arrays[model.table]["wavelength"][0]
        rng = model.validity.get("wavelength")
        if rng is not None:
            wavelength = wavelength[(wavelength >= rng.low) & (wavelength <= rng.high)]
        temperatures = sorted(
            {
                float(t)
                for data in arrays.values()
                if "temperature" in data
                for t in data["temperature"][0]
            }
        )
        if not temperatures:
            t = model.validity["temperature"]
            temperatures = [t.low, t.high]
        cases.append(
            (
                f"{quantity}_stored_points",
                quantity,
                {},
                {"wavelength": [float(w) for w in wavelength], "temperature": temperatures},
            )
        )
    return cases


def table_digest(arrays) -> str:
    """sha256 of a table's numbers: every variable's name, units, shape and values."""
    h = hashlib.sha256()
    for name in sorted(arrays):
        values, units = arrays[name]
        values = np.ascontiguousarray(values, dtype="<f8")
        h.update(f"{name}|{units}|{values.shape}|".encode())
        h.update(values.tobytes())
    return h.hexdigest()


def _table_digests(si) -> dict:
    names = sorted({name for model in si._models.values() for name in model.tables})
    return {name: table_digest(si.catalog.table_arrays(name)) for name in names}


def _variant_cases(si) -> list:
    """Every coefficient set of the ionisation model (one case per dopant species)."""
    if "ionisation" not in si.models:
        return []
    return [
        (
            f"dopant_level_{species}",
            "dopant_level",
            {"dopant": species},
            {"N": [0.0, 1e14, 1e16, 1e18, 3e18, 1e19, 1e20]},
        )
        for species in si.model("ionisation").variants
    ]


def _defect_cases(si) -> list:
    """Shockley-Read-Hall lifetime of every defect of the catalogue, p- and n-type."""
    if "srh_lifetime" not in si.models:
        return []
    from ..catalogue import defects

    cases = []
    for name in defects.names(si.catalog):
        entry = defects.defect(name, si.catalog)
        fixed = (
            {"defect": name, "density": 1e11}
            if entry.absolute
            else {"defect": name, "electron_capture_time": 1e-5}
        )
        for doping in ("Na", "Nd"):
            cases.append(
                (
                    f"srh_lifetime_{name}_{doping}",
                    "srh_lifetime",
                    fixed,
                    {
                        "temperature": [250.0, 300.0, 350.0],
                        doping: [1e14, 1e15, 1e16, 1e17],
                        "excess": [1e12, 1e14, 1e16],
                    },
                )
            )
    return cases


def _data_files(si) -> dict:
    """sha256 of the data a release's numbers depend on besides its model files and
    tables: the defect catalogue."""
    root = si.catalog.root
    return {
        path.relative_to(root).as_posix(): sha256_of(path)
        for path in sorted((root / "defects").glob("*.toml"))
    }


def evaluate(si) -> dict:
    """Evaluate every reference case that ``si``'s release serves."""
    from ..material.results import Result

    cases = {}
    for label, method, fixed, grid in (
        CASES + _table_cases(si) + _variant_cases(si) + _defect_cases(si)
    ):
        if not all(q in si.models for q in _needs(method, fixed)):
            continue
        names = list(grid)
        arrays = np.meshgrid(*[np.asarray(grid[n], float) for n in names], indexing="ij")
        arguments = {n: a.ravel() for n, a in zip(names, arrays, strict=True)}
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # the grid crosses validity limits on purpose
            result = getattr(si, method)(**fixed, **arguments)
        if isinstance(result, Result):  # a result object: every quantity field
            parts = tuple(result.quantities().values())
        else:
            parts = result if isinstance(result, tuple) else (result,)
        cases[label] = {
            "method": method,
            "fixed": fixed,
            "grid": grid,
            "units": [f"{p.units:~}" for p in parts],
            "values": [np.atleast_1d(p.magnitude).astype(float).tolist() for p in parts],
        }
    return cases


def _model_files(si) -> dict:
    return {q: {"model": m.id, "sha256": sha256_of(m.path)} for q, m in sorted(si._models.items())}


def regenerate(release_id: str, catalog: Catalog | None = None) -> Path:
    """Write the reference evaluations of a draft release (refuses a final one)."""
    from ..material.silicon import Silicon

    catalog = catalog or default_catalog()
    release = catalog.release(release_id)
    if release.final:
        raise ReleaseFrozenError(
            f"release {release_id} is final: its reference numbers "
            "never change; make a new release instead"
        )
    si = Silicon(release=release_id, catalog=catalog)
    content = {
        "release": release_id,
        "model_files": _model_files(si),
        "data_files": _data_files(si),
        "table_digests": _table_digests(si),
        "cases": evaluate(si),
    }
    target = release.reference_path
    _atomic_write_text(target, json.dumps(content, indent=1, ensure_ascii=False) + "\n")
    catalog.write_checksums()
    return target


def compare(release_id: str, catalog: Catalog | None = None, rtol: float = 1e-12) -> list[str]:
    """Differences between the frozen reference and a fresh evaluation ([] if none)."""
    from ..material.silicon import Silicon

    catalog = catalog or default_catalog()
    release = catalog.release(release_id)
    frozen = json.loads(catalog.verified_bytes(release.reference_path))
    si = Silicon(release=release_id, catalog=catalog)
    fresh = evaluate(si)
    problems = []
    frozen_digests = frozen.get("table_digests")
    if frozen_digests is None:
        problems.append("the frozen reference has no table digests (regenerate it)")
    else:
        fresh_digests = _table_digests(si)
        for name in sorted(set(frozen_digests) | set(fresh_digests)):
            if frozen_digests.get(name) != fresh_digests.get(name):
                problems.append(
                    f"table {name}: its numbers differ from the frozen reference "
                    "(or it was added or dropped)"
                )
    for label, case in frozen["cases"].items():
        if label not in fresh:
            problems.append(f"{label}: no longer evaluated")
            continue
        if fresh[label]["units"] != case["units"]:
            problems.append(f"{label}: units {fresh[label]['units']} != {case['units']}")
            continue  # also covers a changed number of parts
        for new, old in zip(fresh[label]["values"], case["values"], strict=True):
            new, old = np.asarray(new), np.asarray(old)
            same = new.shape == old.shape and np.allclose(
                new, old, rtol=rtol, atol=0, equal_nan=True
            )
            if not same:
                worst = np.max(np.abs(new / old - 1)) if new.shape == old.shape else np.inf
                problems.append(
                    f"{label}: differs from the frozen reference "
                    f"(largest relative difference {worst:.3g})"
                )
    if release.final:
        for quantity, record in frozen["model_files"].items():
            model = si.model(quantity)
            if model.id != record["model"] or sha256_of(model.path) != record["sha256"]:
                problems.append(f"{quantity}: model file {model.id} changed in a final release")
        fresh_files = _data_files(si)
        for name in sorted(set(frozen.get("data_files", {})) | set(fresh_files)):
            if frozen.get("data_files", {}).get(name) != fresh_files.get(name):
                problems.append(f"{name}: data file changed, added or removed in a final release")
    return problems


def main(argv=None) -> int:
    import argparse

    parser = argparse.ArgumentParser(
        prog="python -m matprops.outputs.reference",
        description="Regenerate or check a release's frozen reference evaluations.",
    )
    parser.add_argument("action", choices=["regenerate", "check"])
    parser.add_argument("release")
    args = parser.parse_args(argv)
    try:
        if args.action == "regenerate":
            print(f"wrote {regenerate(args.release)} (review the diff before committing)")
            return 0
        problems = compare(args.release)
    except Error as exc:  # a read-only install, a final release, an unknown release ...
        print(f"error: {exc}", file=sys.stderr)
        return 2
    print("\n".join(problems) if problems else f"release {args.release}: reference reproduced")
    return 1 if problems else 0


if __name__ == "__main__":
    raise SystemExit(main())
