"""Silicon: one release's choice of models, behind unit-aware methods.

A :class:`Silicon` binds one model per quantity (from a release, with optional
overrides), converts inputs at the boundary (plain numbers in default units, or
pint quantities), checks validity ranges, calls the plain-numpy kernels, and
returns pint quantities. It also composes quantities (density from the lattice
constant and the atomic weight, an intrinsic density from the chosen gap and
densities of states) and reports the provenance of everything it returns.

The numbers are model estimates. Where they feed a decision with consequences
(thermal limits, electrical ratings), defer to measured data, local codes and
licensed practice.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping

from .catalog import Catalog, Model, default_catalog
from .errors import InputError, UnknownQuantityError
from .kernels import crystal
from .units import coerce, quantity

__all__ = ["DERIVED", "Silicon", "models", "releases", "silicon"]

# Quantities computed here from other quantities' models (not model files).
# name -> (quantities it is built from, formula shown in the provenance)
DERIVED = {
    "density": (("lattice_constant", "molar_mass"), "rho = 8 M / (N_A a(T)^3)"),
    "atomic_density": (("lattice_constant",), "N = 8 / a(T)^3"),
    "surface_atom_density": (("lattice_constant",),
                             "atoms per area in one atomic layer of the plane, "
                             "2/a^2 (100), 2 sqrt2/a^2 (110), 4/(sqrt3 a^2) (111)"),
    "dangling_bond_density": (("lattice_constant",),
                              "surface atom density x bonds cut per atom of the ideal "
                              "unreconstructed surface: 2 (100), 1 (110), 1 (111)"),
}

PLANES = tuple(crystal.PLANES)


def _plane(plane) -> str:
    text = str(plane).strip().strip("(){}[]<>").replace(" ", "").replace(",", "")
    if text not in crystal.PLANES:
        raise InputError("plane", f"one of {', '.join(PLANES)} (Miller indices)", repr(plane))
    return text


class Silicon:
    """Crystalline silicon as described by one release of matprops.

    Parameters
    ----------
    release : str, optional
        Release id such as ``"2026.1"``; the newest release when omitted.
    models : mapping of quantity -> model id, optional
        Override the release's choice for some quantities (the provenance says so).
    strict : bool
        Raise :class:`matprops.ValidityError` instead of warning when an input
        leaves a model's validity range.
    catalog : Catalog, optional
        Where the data come from (default: the installed ``datasets/``).

    Inputs are plain numbers or arrays in default units (temperature in K) or pint
    quantities (``matprops.Q_(25, "degC")``); arrays broadcast; a scalar input
    gives a scalar output. Outputs are pint quantities.
    """

    def __init__(self, release: str | None = None, models: Mapping[str, str] | None = None,
                 strict: bool = False, catalog: Catalog | None = None):
        self.catalog = catalog or default_catalog()
        ids = self.catalog.release_ids()
        self.release = self.catalog.release(release if release is not None else ids[-1])
        self.strict = bool(strict)
        overrides = dict(models or {})
        known = set(self.catalog.quantities())
        for name in overrides:
            if name not in known:
                raise UnknownQuantityError(name, known, "in models=")
        self.overridden = frozenset(q for q, m in overrides.items()
                                    if self.release.models.get(q) != m)
        choice = {**self.release.models, **overrides}
        self._models: dict[str, Model] = {}
        for name in choice:
            self._bind(name, choice)

    def _bind(self, name: str, choice: Mapping[str, str], chain=()) -> Model:
        if name in self._models:
            return self._models[name]
        if name not in choice:
            raise UnknownQuantityError(name, choice, f"in release {self.release.id}")
        if name in chain:
            raise InputError("models", "free of circular compositions",
                             " -> ".join(chain + (name,)))
        model = self.catalog.model(name, choice[name])
        if model.requires:
            model = model.compose(**{q: self._bind(q, choice, chain + (name,))
                                     for q in model.requires})
        self._models[name] = model
        return model

    # ------------------------------------------------------------------ plumbing
    @property
    def models(self) -> dict[str, str]:
        """Quantity -> model id in use."""
        return {q: m.id for q, m in self._models.items()}

    def model(self, name: str) -> Model:
        """The bound :class:`~matprops.catalog.Model` serving a quantity."""
        if name not in self._models:
            if name in DERIVED:
                raise UnknownQuantityError(
                    name, self._models, f"with a model of its own: it is derived from "
                    f"{' and '.join(DERIVED[name][0])} (see si.provenance({name!r}))")
            raise UnknownQuantityError(name, list(self._models) + list(DERIVED))
        return self._models[name]

    def kernel(self, name: str):
        """A plain-array callable for a quantity: no units, no checks, no overhead.

        Inputs and outputs are in the internal units listed by
        ``si.model(name).inputs`` and ``.output_units`` (K, cm^-3, eV, ...).
        """
        return self.model(name)

    def _evaluate(self, name: str, **arguments):
        model = self.model(name)
        values = {}
        for argument, raw in arguments.items():
            array, low, high = coerce(raw, argument)
            model.check(argument, low, high, self.strict)
            values[argument] = array
        return model(**values), model.output_units

    def _quantity(self, name: str, **arguments):
        result, units = self._evaluate(name, **arguments)
        return quantity(result, units)

    def _lattice_cm(self, temperature):
        return self._evaluate("lattice_constant", temperature=temperature)[0]

    # ------------------------------------------------------------------ quantities
    def band_gap(self, temperature):
        """Fundamental (indirect) band gap of undoped silicon, eV; no narrowing."""
        return self._quantity("band_gap", temperature=temperature)

    def densities_of_states(self, temperature):
        """Effective densities of states ``(Nc, Nv)`` of the conduction and valence bands, cm^-3."""
        (nc, nv), (uc, uv) = self._evaluate("densities_of_states", temperature=temperature)
        return quantity(nc, uc), quantity(nv, uv)

    def intrinsic_density(self, temperature):
        """Intrinsic carrier density of undoped silicon (no gap narrowing), cm^-3."""
        return self._quantity("intrinsic_density", temperature=temperature)

    def lattice_constant(self, temperature):
        """Cubic lattice constant a(T), nm."""
        return self._quantity("lattice_constant", temperature=temperature).to("nm")

    def molar_mass(self):
        """Molar mass (standard atomic weight) of natural silicon, g/mol."""
        return self._quantity("molar_mass")

    def permittivity(self):
        """Static relative permittivity (dimensionless)."""
        return self._quantity("permittivity")

    def atomic_density(self, temperature):
        """Silicon atoms per volume, 8/a^3, cm^-3."""
        return quantity(crystal.atomic_density(self._lattice_cm(temperature)), "cm^-3")

    def density(self, temperature):
        """Mass density from the lattice constant and the atomic weight, g/cm^3."""
        mass, _ = self._evaluate("molar_mass")
        return quantity(crystal.mass_density(self._lattice_cm(temperature), mass), "g/cm^3")

    def surface_atom_density(self, plane, temperature):
        """Atoms per area in one atomic layer of a (100), (110) or (111) plane, cm^-2."""
        plane = _plane(plane)
        return quantity(crystal.plane_atom_density(self._lattice_cm(temperature), plane),
                        "cm^-2")

    def dangling_bond_density(self, plane, temperature):
        """Dangling bonds per area of the ideal unreconstructed (100)/(110)/(111) surface, cm^-2."""
        plane = _plane(plane)
        return quantity(crystal.dangling_bond_density(self._lattice_cm(temperature), plane),
                        "cm^-2")

    # ------------------------------------------------------------------ optics
    def absorption(self, wavelength, temperature):
        """Band-to-band absorption coefficient, 1/cm.

        ``wavelength`` in nm (or a pint length, photon energy, frequency or
        wavenumber); ``temperature`` in K. Arrays broadcast: pass
        ``wavelength[:, None]`` and ``temperature[None, :]`` for a grid.
        """
        return self._quantity("absorption", wavelength=wavelength, temperature=temperature)

    def refractive_index(self, wavelength, temperature):
        """Real part of the complex refractive index (dimensionless)."""
        return self._quantity("refractive_index", wavelength=wavelength,
                              temperature=temperature)

    def free_carrier_absorption(self, wavelength, n=0, p=0):
        """Free-carrier absorption coefficient, 1/cm, for electron and hole densities
        ``n`` and ``p`` (cm^-3); add it to :meth:`absorption` for doped or injected
        silicon."""
        return self._quantity("free_carrier_absorption", wavelength=wavelength,
                              electron_density=n, hole_density=p)

    # ------------------------------------------------------------------ provenance
    def provenance(self, name: str) -> dict:
        """Model id, source, DOI, validity, coefficients, release, and overrides."""
        if name in DERIVED:
            parts, formula = DERIVED[name]
            record = {"quantity": name, "model": "derived", "formula": formula,
                      "components": {q: self.provenance(q) for q in parts}}
        else:
            record = self.model(name).provenance()
        record["release"] = self.release.id
        record["release_status"] = self.release.status
        record["overridden"] = name in self.overridden
        if name in self.overridden:
            record["release_choice"] = self.release.models.get(name)
        return record

    def sources(self, names: Iterable[str] | None = None):
        """Unique (citation key, Source) pairs behind the given quantities (default: all)."""
        names = list(names) if names is not None else list(self._models)
        seen, found = set(), []
        for name in names:
            parts = DERIVED[name][0] if name in DERIVED else (name,)
            for part in parts:
                for key, source in self.model(part).sources():
                    identity = source.doi or source.title
                    if identity not in seen:
                        seen.add(identity)
                        found.append((key, source))
        return found

    def cite(self, format: str = "bibtex", quantities: Iterable[str] | None = None) -> str:
        """References of the models in use, as BibTeX (default) or plain text."""
        sources = self.sources(quantities)
        if format == "bibtex":
            return "\n\n".join(source.bibtex(key) for key, source in sources)
        if format == "text":
            return "\n".join(f"[{key}] {source.citation()}" for key, source in sources)
        raise InputError("format", "'bibtex' or 'text'", repr(format))

    def table(self, quantities=None, temperature=None, **grid):
        """Evaluate quantities on a grid -> xarray.Dataset.

        Axes by name or alias (``T``, ``Na``, ``Nd``, ``excess``, ``n``, ``p``,
        ``wavelength``, ``carrier``, ``plane``) and ``chunks=`` for a lazy dask-backed
        Dataset; see :func:`matprops.tables.table`.
        """
        from .tables import table

        if temperature is not None:
            grid["temperature"] = temperature
        return table(self, quantities, **grid)

    def compare(self, quantity, models=None, **grid):
        """The same grid evaluated by several models of one quantity -> xarray.Dataset
        with a ``model`` dimension and the spread; see :func:`matprops.tables.compare`."""
        from .tables import compare

        return compare(self, quantity, models, **grid)

    def __repr__(self) -> str:
        chosen = ", ".join(f"{q}={m.id}{'*' if q in self.overridden else ''}"
                           for q, m in self._models.items())
        return (f"<Silicon release {self.release.id} ({self.release.status}); {chosen}"
                f"{'; * overridden' if self.overridden else ''}>")


def silicon(release: str | None = None, models: Mapping[str, str] | None = None,
            strict: bool = False) -> Silicon:
    """Silicon as described by a release (newest by default); see :class:`Silicon`."""
    return Silicon(release=release, models=models, strict=strict)


def releases() -> list[str]:
    """Ids of every release, oldest first."""
    return default_catalog().release_ids()


def models(quantity: str | None = None):
    """Model ids for one quantity, or a dict quantity -> ids for all."""
    catalog = default_catalog()
    if quantity is None:
        return {q: catalog.model_ids(q) for q in catalog.quantities()}
    return catalog.model_ids(quantity)

