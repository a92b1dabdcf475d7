"""Frozen reference evaluations of a release, and the commands that make and seal them.

Each release ``datasets/releases/<id>.toml`` has a companion ``<id>.reference.json``:
its models evaluated through the public API on a fixed grid and, for every table
model, at every stored point of its table (each tabulated wavelength at each
tabulated temperature); the same cases with each alternative model of its quantities
swapped in, one at a time; a digest of the numbers of every table file its models
read; and the sha256 of every model file it pinned. (Release 2026.1 froze only its
defaults; its alternatives are frozen in ``2026.1.alternatives.json``.)

Stored inputs are compared exactly; evaluated numbers at the tolerance stored beside
each case (:func:`_case_tolerance`): 1e-12 relative for closed forms and tables,
1e-9 for iterative results (never tighter than the solver's own tolerance), energies
relative to max(|E|, kT), and a conditioning allowance at compensated points. So the
freeze holds on every CPU, whatever the last bits of its exp and log.

The table digest covers the decoded numbers (every variable's name, units, shape
and float64 values), not the file bytes: netCDF files record library versions in
hidden attributes, so a rebuild with other library versions changes the bytes
but not the numbers.

While a release is a draft, its reference may be regenerated deliberately (and
the diff reviewed in the commit)::

    python -m matprops.outputs.reference regenerate 2026.2
    python -m matprops.outputs.reference check 2026.2
    python -m matprops.outputs.reference freeze 2026.2   # final: archive, seal, record

A final release refuses regeneration: corrections make a new release (see
:mod:`matprops.catalogue.finality`).
"""

from __future__ import annotations

import hashlib
import json
import sys
from collections.abc import Mapping
from pathlib import Path
from types import MappingProxyType

import numpy as np

from ..catalogue.files import interruptible
from ..catalogue.store import (
    Catalogue,
    _atomic_write_text,
    default_catalogue,
    sha256_of,
)
from ..errors import Error, ReleaseFrozenError
from ..material.registry import (  # noqa: F401 (the reference grids, for readers of this module)
    DOPINGS,
    EXCESS,
    OPTICAL_TEMPERATURES,
    TEMPERATURES,
    WAVELENGTHS,
)

__all__ = ["CASES", "compare", "evaluate", "regenerate", "table_digest"]


def static_cases() -> list:
    """Every reference case declared in the quantity registry that does not depend on
    the data (``(label, method, fixed keyword arguments, gridded arguments)``; gridded
    arguments are combined as an outer product in the order given)."""
    from ..material.registry import declared

    return declared().reference_cases(_NO_MATERIAL)


class _NoMaterial:
    """Stands for a material in :func:`static_cases`: data-dependent cases see a
    material that serves nothing and contribute none."""

    models: Mapping[str, str] = MappingProxyType({})


_NO_MATERIAL = _NoMaterial()

#: the declared cases that do not depend on the data (see :func:`static_cases`)
CASES = static_cases()


def _needs(method: str, fixed: dict | None = None) -> tuple[str, ...]:
    """The quantities whose models a case evaluates: those of the quantity the call
    evaluates (read from the registry: ``resistivity(conversion="standard")`` is the
    standard's own model)."""
    from ..material.registry import declared

    found = declared().for_method(method, fixed)
    if found is None:
        raise KeyError(f"no declared quantity is served by method {method!r}")
    return found.models


def _table_cases(si) -> list:
    """One case per table model: every stored wavelength (inside the model's range)
    at every stored temperature of its tables (or its validity limits if its table
    holds one temperature)."""
    cases = []
    for quantity in sorted(si.models):
        model = si.model(quantity)
        if model.kind != "table":
            continue
        arrays = {name: si.catalogue.table_arrays(name) for name in model.tables}
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
    return {name: table_digest(si.catalogue.table_arrays(name)) for name in names}


def _data_files(si) -> dict:
    """sha256 of the data a release's numbers depend on besides its model files and
    tables: the defect catalogue (keyed ``defects/<file>`` wherever the release reads it)."""
    folder = si.catalogue.data_folder("defects")
    return {f"defects/{path.name}": sha256_of(path) for path in sorted(folder.glob("*.toml"))}


# --------------------------------------------------------------------------- tolerances

#: Methods whose value passes through an iterative solve (charge neutrality with a
#: self-consistent narrowing, the steady state of implied voltage, doping from
#: resistivity) when the case does not fix the carrier densities. A method missing
#: here is compared as a closed form; the ulp-perturbation test
#: (tests/regression/test_portable_freeze.py) fails if one is missing.
SOLVED = frozenset(
    {
        "equilibrium",
        "gap_narrowing",
        "band_edge_shifts",
        "effective_intrinsic_density",
        "mobility",
        "high_field_mobility",
        "diffusivity",
        "resistivity",
        "conductivity",
        "doping_from_resistivity",
        "intrinsic_lifetime",
        "auger_lifetime",
        "srh_lifetime",
        "effective_lifetime",
        "implied_voltage",
    }
)

#: Closed forms and table interpolation: the last bits of exp, log and pow differ
#: between CPUs and libm builds by an ulp or two; 1e-12 leaves four decades of room.
CLOSED_FORM_RTOL = 1e-12

#: Iterative results: the equilibrium solver stops when the self-consistent narrowing
#: moves by less than 1e-10 kT (ni_eff consistent to 5e-11) and the neutrality residual
#: is below 1e-12; a different last bit can end the iteration one step earlier or
#: later. Compared no tighter than ten times that stated tolerance.
SOLVER_RTOL = 1e-9

#: At exactly or nearly compensated points the net charge Nd+ - Na- is a small
#: difference of two large densities: an ulp of either moves n and p by about
#: eps (Nd + Na) / (n + p). Such points get that much more room, times this factor
#: (a one-ulp change of every exp and log moves resistivity by 0.6 of the bound).
CONDITIONING_FACTOR = 100.0
_EPS = float(np.finfo(float).eps)

#: The equilibrium solver's stated neutrality tolerance when the references were
#: frozen: it stopped at a relative residual |ln(p + Nd+) - ln(n + Na-)| <= 1e-12, which
#: at a compensated point leaves n and p uncertain by up to about 1e-12 (Nd + Na) /
#: (n + p) (45 times the rounding term above). A solver converged further (the Newton
#: solver from matprops 2026.2 takes eta to about 1e-12 of the root there) lands
#: anywhere inside that bound, so the conditioning allowance adds it: measured on
#: 2026.1's resistivity at Na = Nd = 1e16 cm^-3, 250 K, the solvers differ by 2.3e-5
#: against a bound of 1.4e-4.
NEUTRALITY_RTOL = 1e-12


def _case_tolerance(method: str, fixed: dict, grid: dict) -> dict:
    """The tolerance a case is frozen with (stored beside it in new references)."""
    solved = (
        method in SOLVED
        and fixed.get("conversion") != "standard"
        and not ({"n", "p"} <= set(grid) and method in ("gap_narrowing", "band_edge_shifts"))
    )
    if not solved:
        return {"relative": CLOSED_FORM_RTOL, "reason": "closed form or table interpolation"}
    tolerance = {
        "relative": SOLVER_RTOL,
        "reason": "iterative: the equilibrium solver's stated tolerance (1e-10 kT on the "
        "self-consistent narrowing, 1e-12 on neutrality) times ten",
    }
    if {"Na", "Nd"} <= set(grid):
        tolerance["conditioning"] = "neutrality"
    return tolerance


def _point_tolerance(si, case: dict, tolerance: dict, shape) -> np.ndarray:
    """Relative tolerance at each point of a case: the case's own, widened where charge
    neutrality is ill-conditioned (see :data:`CONDITIONING_FACTOR`)."""
    rtol = np.full(shape, float(tolerance["relative"]))
    if tolerance.get("conditioning") != "neutrality":
        return rtol
    grid = case["grid"]
    names = list(grid)
    arrays = np.meshgrid(*[np.asarray(grid[n], float) for n in names], indexing="ij")
    point = {n: a.ravel() for n, a in zip(names, arrays, strict=True)}
    donor = {k: case["fixed"][k] for k in ("donor", "acceptor") if k in case["fixed"]}
    # the grid crosses validity limits on purpose: a view that skips the checks
    state = si._checked_already().equilibrium(
        point.get("temperature", 300.0), Na=point["Na"], Nd=point["Nd"], **donor
    )
    carriers = state.n.m_as("cm^-3") + state.p.m_as("cm^-3")
    condition = (point["Na"] + point["Nd"]) / carriers
    widened = (CONDITIONING_FACTOR * _EPS + NEUTRALITY_RTOL) * condition
    return np.maximum(rtol, np.broadcast_to(widened, shape))


def _energy_scale(case: dict, shape) -> np.ndarray | None:
    """kT at each point of a case with a temperature axis (eV), else None: energies
    such as a Fermi level are compared relative to max(|E|, kT), since a level at the
    midgap reference is zero to within rounding."""
    from ..kernels.constants import BOLTZMANN_EV

    grid = case["grid"]
    if "temperature" not in grid:
        return None
    names = list(grid)
    arrays = np.meshgrid(*[np.asarray(grid[n], float) for n in names], indexing="ij")
    t = arrays[names.index("temperature")].ravel()
    return np.broadcast_to(BOLTZMANN_EV * t, shape)


def _differs(new, old, rtol, energy_scale) -> tuple[bool, float]:
    """(whether new leaves the tolerance around old, the largest scaled difference)."""
    new, old = np.asarray(new, float), np.asarray(old, float)
    if new.shape != old.shape:
        return True, np.inf
    scale = np.abs(old)
    if energy_scale is not None:
        scale = np.maximum(scale, energy_scale)
    both_nan = np.isnan(new) & np.isnan(old)
    with np.errstate(invalid="ignore", divide="ignore"):
        gap = np.where(both_nan, 0.0, np.abs(new - old))
        # densities deep in freeze-out underflow to subnormal numbers: anything below
        # 1e-290 of a density counts as equal to zero
        allowed = rtol * scale + 1e-290
        exceeded = ~(gap <= allowed) & ~both_nan
        worst = np.nanmax(np.where(scale > 0, gap / scale, np.where(gap > 0, np.inf, 0.0)))
    return bool(exceeded.any()), float(worst)


# --------------------------------------------------------------------------- evaluation


def _with_units(fixed: dict) -> dict:
    """Stored inputs in internal units; the lengths the public API takes only with a
    unit (thickness, stored in cm) get theirs."""
    from ..units import ARGUMENTS, NEEDS_UNIT, Q_

    return {
        k: Q_(v, ARGUMENTS[k][0]) if k in NEEDS_UNIT and not isinstance(v, str) else v
        for k, v in fixed.items()
    }


def _evaluate_cases(si, cases) -> dict:
    from ..material.results import Result

    evaluated = {}
    si = si._checked_already()  # the grid crosses validity limits on purpose
    for label, method, fixed, grid in cases:
        names = list(grid)
        arrays = np.meshgrid(*[np.asarray(grid[n], float) for n in names], indexing="ij")
        arguments = {n: a.ravel() for n, a in zip(names, arrays, strict=True)}
        record = {"method": method, "fixed": fixed, "grid": grid}
        try:
            result = getattr(si, method)(**_with_units(fixed), **arguments)
        except Error as exc:  # a model that does not cover a case (a carrier, a species)
            record["error"] = type(exc).__name__
            evaluated[label] = record
            continue
        if isinstance(result, Result):  # a result object: every quantity field
            parts = tuple(result.quantities().values())
        else:
            parts = result if isinstance(result, tuple) else (result,)
        record["units"] = [f"{p.units:~}" for p in parts]
        record["values"] = [np.atleast_1d(p.magnitude).astype(float).tolist() for p in parts]
        evaluated[label] = record
    return evaluated


def _default_cases(si) -> list:
    """The cases of ``si``'s release: every declared case whose models it serves (the
    quantity registry's, including those that depend on the data, such as one per
    defect of the catalogue) and every stored point of each table model."""
    from ..material.registry import declared

    return [
        case
        for case in declared().reference_cases(si) + _table_cases(si)
        if all(q in si.models for q in _needs(case[1], case[2]))
    ]


def evaluate(si) -> dict:
    """Evaluate every reference case that ``si``'s release serves (its default models)."""
    return _evaluate_cases(si, _default_cases(si))


def alternatives(si) -> dict:
    """The same cases evaluated with each alternative model of each quantity the release
    serves, one model swapped at a time: labelled ``<case>@<quantity>=<model>``."""
    from ..material.silicon import Silicon

    evaluated = {}
    for quantity, default in sorted(si.release.models.items()):
        for model_id in si.catalogue.model_ids(quantity):
            if model_id == default:
                continue
            variant = Silicon(
                release=si.release.id, models={quantity: model_id}, catalogue=si.catalogue.base
            )
            cases = [
                (f"{label}@{quantity}={model_id}", method, fixed, grid)
                for label, method, fixed, grid in _default_cases(variant)
                if (quantity in _needs(method, fixed) and not label.endswith("_stored_points"))
                or label == f"{quantity}_stored_points"
            ]
            evaluated.update(_evaluate_cases(variant, cases))
    return evaluated


def _with_tolerances(cases: dict) -> dict:
    for case in cases.values():
        case["tolerance"] = _case_tolerance(case["method"], case["fixed"], case["grid"])
    return cases


def _model_files(si) -> dict:
    return {q: {"model": m.id, "sha256": sha256_of(m.path)} for q, m in sorted(si._models.items())}


def regenerate(release_id: str, catalogue: Catalogue | None = None) -> Path:
    """Write the reference evaluations of a draft release (refuses a final one): its
    default models, every alternative model of its quantities, each case with the
    tolerance it is compared with."""
    from ..material.silicon import Silicon

    catalogue = catalogue or default_catalogue()
    release = catalogue.release(release_id)
    if release.final:
        raise ReleaseFrozenError(
            f"release {release_id} is final: its reference numbers "
            "never change; make a new release instead"
        )
    si = Silicon(release=release_id, catalogue=catalogue)
    content = {
        "release": release_id,
        "model_files": _model_files(si),
        "data_files": _data_files(si),
        "table_digests": _table_digests(si),
        "cases": _with_tolerances(evaluate(si)),
        "alternatives": _with_tolerances(alternatives(si)),
    }
    target = release.reference_path
    _atomic_write_text(target, json.dumps(content, indent=1, ensure_ascii=False) + "\n")
    _holder(release).write_checksums()  # of the folder that holds the release
    return target


def _holder(release) -> Catalogue:
    """The catalogue whose folder holds a release's file (the shipped one or an overlay)."""
    holder = release.catalogue
    if not isinstance(holder, Catalogue):  # (every release is read by a catalogue)
        raise Error(f"release {release.id} was not read from a catalogue folder")
    return holder


def _compare_cases(si, frozen: dict, fresh: dict) -> list[str]:
    problems = []
    for label, case in frozen.items():
        if label not in fresh:
            problems.append(f"{label}: no longer evaluated")
            continue
        now = fresh[label]
        if "error" in case or "error" in now:
            if case.get("error") != now.get("error"):
                problems.append(
                    f"{label}: raised {now.get('error')} where the frozen reference "
                    f"recorded {case.get('error') or 'values'}"
                )
            continue
        if now["units"] != case["units"]:
            problems.append(f"{label}: units {now['units']} != {case['units']}")
            continue  # also covers a changed number of parts
        tolerance = case.get("tolerance") or _case_tolerance(
            case["method"], case["fixed"], case["grid"]
        )
        shape = np.shape(case["values"][0])
        rtol = _point_tolerance(si, case, tolerance, shape)
        kt = _energy_scale(case, shape)
        for new, old, units in zip(now["values"], case["values"], case["units"], strict=True):
            scale = kt if units == "eV" else None
            differs, worst = _differs(new, old, rtol, scale)
            if differs:
                problems.append(
                    f"{label}: differs from the frozen reference beyond its tolerance "
                    f"({tolerance['relative']:g} relative; largest difference {worst:.3g})"
                )
    return problems


def compare(release_id: str, catalogue: Catalogue | None = None) -> list[str]:
    """Differences between the frozen reference and a fresh evaluation ([] if none).

    Stored inputs are compared exactly (the same grid is evaluated); evaluated numbers
    within each case's tolerance (stored beside it; for references written before
    tolerances were stored, the same policy: :func:`_case_tolerance`).
    """
    from ..material.silicon import Silicon

    catalogue = catalogue or default_catalogue()
    release = catalogue.release(release_id)
    frozen = json.loads(catalogue.verified_bytes(release.reference_path))
    si = Silicon(release=release_id, catalogue=catalogue)
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
    problems += _compare_cases(si, frozen["cases"], evaluate(si))
    frozen_alternatives = dict(frozen.get("alternatives", {}))
    supplement = release.reference_path.with_name(f"{release_id}.alternatives.json")
    if supplement.is_file():  # alternatives frozen after the release itself (2026.1)
        frozen_alternatives.update(json.loads(catalogue.verified_bytes(supplement))["cases"])
    if frozen_alternatives:
        problems += _compare_cases(si, frozen_alternatives, alternatives(si))
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


# --------------------------------------------------------------------------- freezing


def _sealed_paths(catalogue: Catalogue, release_id: str) -> list[str]:
    """Every file a release's numbers depend on, relative to the datasets folder: the
    release file, its reference(s), its archive (models and defects) and the tables
    its archived models read."""
    root = catalogue.root
    releases = root / "releases"
    paths = [releases / f"{release_id}.toml", releases / f"{release_id}.reference.json"]
    supplement = releases / f"{release_id}.alternatives.json"
    if supplement.is_file():
        paths.append(supplement)
    archive = root / "archive" / release_id
    paths += sorted(p for p in archive.rglob("*") if p.is_file())
    tables = set()
    for path in archive.glob("models/*/*.toml"):
        model = catalogue.model_at(path, catalogue)
        tables.update(model.tables)
    paths += [catalogue.data_folder("tables") / name for name in sorted(tables)]
    return [p.relative_to(root).as_posix() for p in paths]


def archive(catalogue: Catalogue, release_id: str, models: dict) -> Path:
    """Copy every model file of every quantity a release serves, and the defect
    catalogue, into ``archive/<release>/``: what the release sealed stays readable
    while the main tree moves on."""
    import shutil

    root = catalogue.root
    target = root / "archive" / release_id
    for quantity in sorted(models):
        for model_id in catalogue.model_ids(quantity):
            source = root / "models" / quantity / f"{model_id}.toml"
            destination = target / "models" / quantity / source.name
            destination.parent.mkdir(parents=True, exist_ok=True)
            shutil.copyfile(source, destination)
    for source in sorted((root / "defects").glob("*.toml")):
        destination = target / "defects" / source.name
        destination.parent.mkdir(parents=True, exist_ok=True)
        shutil.copyfile(source, destination)
    return target


def write_seal(catalogue: Catalogue, release_id: str, date: str) -> tuple[Path, str]:
    """Write ``releases/<id>.seal.json`` (files and their sha256); return it and its
    digest, the line to record in :data:`matprops.catalogue.finality.FINAL_SEALS`."""
    from ..catalogue.finality import SEAL_VERSION

    files = {
        relative: sha256_of(catalogue.root / relative)
        for relative in _sealed_paths(catalogue, release_id)
    }
    seal = {"release": release_id, "sealed": date, "version": SEAL_VERSION, "files": files}
    target = catalogue.root / "releases" / f"{release_id}.seal.json"
    _atomic_write_text(target, json.dumps(seal, indent=1, ensure_ascii=False) + "\n")
    return target, sha256_of(target)


def _record_seal(release_id: str, digest: str) -> Path:
    """Add a release's line to FINAL_SEALS in the package code (a source checkout)."""
    from ..catalogue import finality

    path = Path(finality.__file__)
    text = path.read_text()
    anchor = "FINAL_SEALS: Mapping[str, str] = {\n"
    closing = text.index("}\n", text.index(anchor))
    line = f'    "{release_id}": "{digest}",\n'
    _atomic_write_text(path, text[:closing] + line + text[closing:])
    finality.FINAL_SEALS = {**finality.FINAL_SEALS, release_id: digest}
    return path


def freeze(release_id: str, catalogue: Catalogue | None = None, date: str | None = None) -> str:
    """Make a draft release final: check that its reference reproduces, mark it final,
    archive its model and defect files, seal every file its numbers depend on and
    record the seal's digest in the package code. Returns the digest."""
    import datetime

    catalogue = catalogue or default_catalogue()
    release = catalogue.release(release_id)
    if release.final:
        raise ReleaseFrozenError(f"release {release_id} is final already")
    problems = compare(release_id, catalogue)
    if problems:
        raise ReleaseFrozenError(
            f"release {release_id} does not reproduce its reference; regenerate it and "
            f"review the diff first: {problems[0]}"
        )
    date = date or datetime.date.today().isoformat()
    if release.base is not None:  # an own release of an overlay catalogue
        return _freeze_own(release, date)
    _mark_final(release, date)
    archive(catalogue, release_id, dict(release.models))
    catalogue.write_checksums()
    _, digest = write_seal(catalogue, release_id, date)
    catalogue.write_checksums()
    _record_seal(release_id, digest)
    return digest


def _mark_final(release, date: str) -> None:
    import re

    text = release.path.read_text()
    text = re.sub(r'(?m)^status = "draft"$', 'status = "final"', text)
    text = re.sub(r"(?m)^date = .*$", f'date = "{date}"', text)
    _atomic_write_text(release.path, text)


def _freeze_own(release, date: str) -> str:
    """Freeze an own release of an overlay catalogue: archive every file its numbers
    depend on as it sees them now (its own models and its base's), mark it final, seal
    it, and record the seal in the seals file outside the overlay."""
    from ..catalogue import overlay as overlays

    layer = release.catalogue
    overlays.archive_own(layer, release)  # read through the draft's view
    _mark_final(release, date)
    layer.write_checksums()
    _, digest = overlays.seal_own(layer, release, date)
    layer.write_checksums()
    layer.seal_record.add(layer.name, release.id, digest)
    overlays.forget(layer, release.id)
    return digest


def main(argv=None) -> int:
    import argparse

    parser = argparse.ArgumentParser(
        prog="python -m matprops.outputs.reference",
        description="Regenerate, check or freeze a release's frozen reference evaluations.",
    )
    parser.add_argument("action", choices=["regenerate", "check", "freeze"])
    parser.add_argument("release")
    parser.add_argument(
        "--catalogue",
        action="append",
        default=[],
        metavar="PATH",
        help="an overlay catalogue of own models and releases (repeatable)",
    )
    parser.add_argument(
        "--seals",
        default=None,
        metavar="FILE",
        help="the record of final own releases (default $MATPROPS_SEALS or the user's)",
    )
    args = parser.parse_args(argv)
    with interruptible("python -m matprops.outputs.reference"):  # no temporary left behind
        return _run(args)


def _run(args) -> int:
    try:
        catalogue = None
        if args.catalogue:
            from ..catalogue.overlay import catalogue_at

            catalogue = catalogue_at(None, args.catalogue, args.seals)
        if args.action == "regenerate":
            target = regenerate(args.release, catalogue)
            print(f"wrote {target} (review the diff before committing)")
            return 0
        if args.action == "freeze":
            digest = freeze(args.release, catalogue)
            from ..catalogue.overlay import Overlay

            release = (catalogue or default_catalogue()).release(args.release)
            layer = _holder(release)
            if not isinstance(layer, Overlay):  # a release shipped with matprops
                print(
                    f"release {args.release} is final: sealed with sha256 {digest}, recorded "
                    "in matprops/catalogue/finality.py (commit both)"
                )
            else:
                print(
                    f"release {args.release} is final: sealed with sha256 {digest}, recorded "
                    f"in {layer.seal_record.where} as '{digest}  {args.release}  "
                    f"{layer.name}' (its users need that line in their seals file)"
                )
            return 0
        problems = compare(args.release, catalogue)
    except Error as exc:  # a read-only install, a final release, an unknown release ...
        print(f"error: {exc}", file=sys.stderr)
        return 2
    print("\n".join(problems) if problems else f"release {args.release}: reference reproduced")
    return 1 if problems else 0


if __name__ == "__main__":
    raise SystemExit(main())
