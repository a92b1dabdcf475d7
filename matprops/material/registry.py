"""The quantity registry: every quantity declared once, beside the method that serves it.

A family of methods (:mod:`.crystal`, :mod:`.carriers`, :mod:`.optical`,
:mod:`.transport`, :mod:`.recombination`) declares each of its quantities with the
:func:`quantity` decorator on the :class:`~matprops.Silicon` method that serves it::

    @quantity(units="1/K", long_name="linear thermal-expansion coefficient",
              cases=[case(temperature=TEMPERATURES)])
    def thermal_expansion(self, temperature):
        return self._quantity("thermal_expansion", temperature=temperature)

The declaration holds the quantity's name (the method's, unless given) and aliases,
the units and parts of what the method returns, the models it is made from (its own
model file, or the quantities a derived one is composed from, with the formula shown
in its provenance), how a bound kernel is made (:meth:`~matprops.Silicon.kernel`),
how a table selects it, and the cases of its frozen reference evaluation. The inputs
are the method's own parameters, each a name of the argument vocabulary
(:mod:`matprops.vocabulary`): the table axes a quantity spans, the command-line
options that set them and the kinds of argument the property sweep draws are read
from the signature, so they cannot disagree with it.

Everything that lists quantities is generated from this registry: the facade's
dispatch and provenance (:data:`DERIVED`), tables (:mod:`.tables`), bound kernels
(:mod:`.bound`), the command line, the frozen reference cases
(:mod:`matprops.outputs.reference`), the model catalogue in ``docs/`` and the
hypothesis sweep of the tests. Each declared method also accepts every name of its
arguments (``Na`` or ``acceptor_density``, ``T`` or ``temperature``).
"""

from __future__ import annotations

import contextlib
import functools
import inspect
from collections.abc import Callable, Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

from .. import vocabulary
from ..errors import InputError

__all__ = [
    "DOPANTS_GRID",
    "REGISTRY",
    "TEMPERATURES",
    "Case",
    "Part",
    "Quantity",
    "case",
    "declared",
    "method_of",
    "quantity",
]

# --------------------------------------------------------------------------- reference grids
# The fixed grids of the frozen reference evaluations (matprops.outputs.reference): a
# release's numbers are evaluated on them and compared at every later check. Changing
# one changes no number, but makes a draft's reference regenerate new cases.

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
DOPANTS_GRID = {"Nd": [0.0, 1e14, 1e16, 1e18, 3e19, 1e20], "Na": [0.0, 1e15, 1e17, 1e19]}
DOPING_GRID = {"temperature": [250.0, 300.0, 350.0], **DOPANTS_GRID}

# --------------------------------------------------------------------------- records


@dataclass(frozen=True)
class Part:
    """One variable of a quantity's table: its name, long name, and (for a method that
    returns a result object) the attribute that holds it."""

    name: str
    long_name: str
    field: str | None = None


@dataclass(frozen=True)
class Case:
    """One case of a release's frozen reference: the method called with ``fixed``
    keyword arguments on the outer product of ``grid`` (in the order given)."""

    grid: Mapping[str, Sequence[float]]
    fixed: Mapping[str, object] = field(default_factory=dict)
    label: str | None = None
    method: str | None = None


def case(label: Any = None, *, method: Any = None, fixed: Any = None, **grid) -> Case:
    """A reference case: ``case("mobility_electron", fixed={"carrier": "electron"},
    temperature=[300.0], Nd=[1e15, 1e18])``; the label defaults to the quantity's name."""
    return Case(dict(grid), dict(fixed or {}), label, method)


@dataclass(frozen=True, eq=False)
class Quantity:
    """The declaration of one quantity (see the module notes).

    Attributes
    ----------
    name : the quantity, as in model folders, releases, tables and ``si.provenance``
    method : the :class:`~matprops.Silicon` method that serves it
    family : the family module that declares it (``crystal``, ``carriers`` ...)
    units : what the method returns (a tuple for a method returning several parts)
    parts : the variables of its table (one named after the quantity, unless several)
    models : the quantities whose models make it: its own model file, or, for a
        derived quantity, the quantities it is composed from
    formula : a derived quantity's formula, shown in its provenance (None otherwise)
    uses : further models it consults (equilibrium densities, the thermal velocity):
        a table offers it only where the release serves them too
    aliases : other names accepted for the quantity
    takes : table axis -> the method's parameter (read from the signature)
    required : axes the method cannot do without (parameters without a default)
    wants : for a table's default selection: at least one of these axes given
    log : its values span decades (a log axis in plots)
    fixed : keyword arguments always passed to the method
    by_default : whether a table with no quantities named includes it
    cases : its frozen reference cases (:class:`Case`, or a callable ``si -> cases``
        for cases that depend on the data, e.g. one per defect of the catalogue)
    kernel : how ``si.kernel(name, **fixed)`` is made: ``kernel(si, name, fixed)``,
        or None for the model's own kernel (a variant per dopant chosen with ``dopant=``)
    kernel_method : the public method whose units and structure the bound kernel has
        (default: ``method``)
    kernel_note : a sentence for the bound kernel's docstring
    long_name : one line saying what it is
    """

    name: str
    method: str
    family: str
    units: str | tuple[str, ...]
    parts: tuple[Part, ...]
    models: tuple[str, ...]
    formula: str | None = None
    uses: tuple[str, ...] = ()
    aliases: tuple[str, ...] = ()
    takes: Mapping[str, str] = field(default_factory=dict)
    required: tuple[str, ...] = ()
    wants: tuple[str, ...] = ()
    log: bool = False
    fixed: Mapping[str, object] = field(default_factory=dict)
    by_default: bool = True
    cases: tuple[Any, ...] = ()
    kernel: Callable | None = None
    kernel_method: str | None = None
    kernel_note: str = ""
    long_name: str = ""

    @property
    def derived(self) -> bool:
        """Whether it is composed from other quantities' models (no model file)."""
        return self.formula is not None

    @property
    def outputs(self) -> tuple[tuple[str, str], ...]:
        """(variable name, long name) of each part."""
        return tuple((p.name, p.long_name) for p in self.parts)

    @property
    def fields(self) -> tuple[str, ...]:
        """For a method returning a result object: the attribute of each part."""
        return tuple(p.field for p in self.parts if p.field)

    @property
    def needs(self) -> tuple[str, ...]:
        """Every quantity whose model it evaluates (models, then uses)."""
        return tuple(dict.fromkeys((*self.models, *self.uses)))

    def model_quantities(self) -> tuple[str, ...]:
        """The quantities whose models a table of it cites."""
        return self.needs

    def parameters(self, si=None) -> dict[str, tuple[str, bool]]:
        """Axis -> (the method's parameter name, whether the parameter is required)."""
        return {ax: (param, ax in self.required) for ax, param in self.takes.items()}

    def call(self, si, values: Mapping[str, object]):
        """Call the method with axis values (missing optional axes: defaults)."""
        return getattr(si, self.method)(
            **{self.takes[ax]: value for ax, value in values.items() if ax in self.takes},
            **self.fixed,
        )

    def reference_cases(self, si) -> list[tuple[str, str, dict, dict]]:
        """Its frozen reference cases as ``(label, method, fixed, grid)``."""
        found = []
        for entry in self.cases:
            for item in entry(si) if callable(entry) else (entry,):
                found.append(
                    (
                        item.label or self.name,
                        item.method or self.method,
                        {**self.fixed, **item.fixed},
                        dict(item.grid),
                    )
                )
        return found

    def __repr__(self) -> str:
        made = f"derived from {', '.join(self.models)}" if self.derived else "own model"
        axes = ", ".join(self.takes) or "no axes"
        return f"<Quantity {self.name}: si.{self.method}({axes}) -> {self.units}; {made}>"


class Registry(Mapping[str, Quantity]):
    """Quantity name -> :class:`Quantity`, in the order declared; also knows which
    methods serve which quantities (``band_edge_shifts`` serves ``gap_narrowing``)."""

    def __init__(self):
        self._quantities: dict[str, Quantity] = {}
        self._aliases: dict[str, str] = {}
        self._methods: dict[str, list[str]] = {}  # method -> quantities it serves
        self._extra_cases: dict[str, list] = {}  # quantity -> cases of its other methods

    # -- mapping
    def __getitem__(self, name: str) -> Quantity:
        return self._quantities[self._aliases.get(name, name)]

    def __iter__(self) -> Iterator[str]:
        return iter(self._quantities)

    def __len__(self) -> int:
        return len(self._quantities)

    def __contains__(self, name) -> bool:
        return isinstance(name, str) and self._aliases.get(name, name) in self._quantities

    # -- declaring
    def add(self, declared: Quantity) -> None:
        for name in (declared.name, *declared.aliases):
            if name in self._quantities or name in self._aliases:
                raise ValueError(f"quantity {name!r} declared twice")
        self._quantities[declared.name] = declared
        for alias in declared.aliases:
            self._aliases[alias] = declared.name
        self._methods.setdefault(declared.method, []).append(declared.name)

    def remove(self, name: str) -> None:
        """Forget a declaration (tests that plug in a quantity take it out again)."""
        declared = self._quantities.pop(name)
        for alias in declared.aliases:
            self._aliases.pop(alias, None)
        self._methods[declared.method].remove(name)

    @contextlib.contextmanager
    def scratch(self) -> Iterator[Registry]:
        """Declarations made (or removed) inside the block are undone at its end
        (tests plug in stand-in quantities this way)."""
        saved = (
            dict(self._quantities),
            dict(self._aliases),
            {k: list(v) for k, v in self._methods.items()},
            {k: list(v) for k, v in self._extra_cases.items()},
        )
        try:
            yield self
        finally:
            self._quantities, self._aliases, self._methods, self._extra_cases = saved

    def serve(self, method: str, name: str, cases: Iterable = ()) -> None:
        self._methods.setdefault(method, []).append(name)
        self._extra_cases.setdefault(name, []).extend((method, c) for c in cases)

    # -- reading
    def canonical(self, name: str) -> str:
        """The quantity an alias stands for (any other name unchanged)."""
        return self._aliases.get(name, name) if isinstance(name, str) else name

    def methods(self) -> dict[str, tuple[str, ...]]:
        """Public method -> the quantities it serves."""
        return {m: tuple(q) for m, q in self._methods.items() if q}

    def for_method(self, method: str, fixed: Mapping | None = None) -> Quantity | None:
        """The quantity a call of ``method`` with these keyword arguments evaluates: of
        the quantities it serves, the one whose ``fixed`` arguments the call matches
        (``resistivity(..., conversion="standard")`` -> ``standard_resistivity``)."""
        fixed = fixed or {}
        best, score = None, -1
        for name in self._methods.get(method, ()):
            declared = self._quantities[name]
            if all(fixed.get(k) == v for k, v in declared.fixed.items()):
                if len(declared.fixed) > score:
                    best, score = declared, len(declared.fixed)
        return best

    def derived(self) -> dict[str, tuple[tuple[str, ...], str]]:
        """Derived quantity -> (the quantities it is built from, its formula)."""
        return {q.name: (q.models, q.formula) for q in self.values() if q.formula is not None}

    def reference_cases(self, si) -> list[tuple[str, str, dict, dict]]:
        """Every declared reference case, as ``(label, method, fixed, grid)``."""
        found = []
        for declared in self.values():
            found += declared.reference_cases(si)
            for method, entry in self._extra_cases.get(declared.name, ()):
                for item in entry(si) if callable(entry) else (entry,):
                    found.append(
                        (
                            item.label or method,
                            item.method or method,
                            dict(item.fixed),
                            dict(item.grid),
                        )
                    )
        return found


#: every declared quantity, in the order declared
REGISTRY = Registry()


def declared() -> Registry:
    """The registry with every family's declarations (importing this package loads them)."""
    return REGISTRY


# --------------------------------------------------------------------------- declaring


def _signature(function: Callable) -> tuple[dict[str, str], tuple[str, ...], dict[str, str]]:
    """(axis -> parameter, required axes, other name -> parameter) of a method.

    Every parameter must be a name of the argument vocabulary; the third mapping lets
    the method accept each argument's other names (``acceptor_density`` for ``Na``).
    """
    takes, required, renames = {}, [], {}
    parameters = list(inspect.signature(function).parameters.values())[1:]  # no self
    for parameter in parameters:
        if parameter.kind in (parameter.VAR_POSITIONAL, parameter.VAR_KEYWORD):
            continue
        spec = vocabulary.ARGUMENTS.get(vocabulary.canonical_name(parameter.name) or "")
        if spec is None:
            raise ValueError(
                f"method {function.__qualname__}: parameter {parameter.name!r} is not in the "
                "argument vocabulary (matprops/vocabulary.py); add it there"
            )
        for other in spec.names:
            if other != parameter.name:
                renames[other] = parameter.name
        if spec.axis:
            takes[spec.name] = parameter.name
            if parameter.default is inspect.Parameter.empty:
                required.append(spec.name)
    names = {p.name for p in parameters}
    renames = {k: v for k, v in renames.items() if k not in names}
    return takes, tuple(required), renames


def _accepting_every_name(function: Callable, renames: Mapping[str, str]) -> Callable:
    """The method, also accepting each argument's other names as keywords."""
    if getattr(function, "_renames", None) is not None:  # declared twice: wrapped once
        return function
    if not renames:
        setattr(function, "_renames", {})  # noqa: B010 (marks the method as declared)
        return function
    others = frozenset(renames)

    @functools.wraps(function)
    def method(self, *args, **kwargs):
        if kwargs and not others.isdisjoint(kwargs):
            for other in others.intersection(kwargs):
                target = renames[other]
                if target in kwargs:
                    raise InputError(
                        other, f"given once (it names the same argument as {target!r})", "twice"
                    )
                kwargs[target] = kwargs.pop(other)
        return function(self, *args, **kwargs)

    setattr(method, "_renames", dict(renames))  # noqa: B010 (as above)
    return method


def _first_line(function: Callable) -> str:
    doc = inspect.getdoc(function) or ""
    return doc.split("\n\n")[0].replace("\n", " ").strip()


def quantity(
    name: str | None = None,
    *,
    units: str | tuple[str, ...],
    long_name: str | None = None,
    parts: Sequence[Part] | None = None,
    models: Sequence[str] | None = None,
    formula: str | None = None,
    uses: Sequence[str] = (),
    aliases: Sequence[str] = (),
    wants: Sequence[str] = (),
    log: bool = False,
    fixed: Mapping[str, object] | None = None,
    by_default: bool = True,
    cases: Sequence = (),
    kernel: Callable | None = None,
    kernel_method: str | None = None,
    kernel_note: str = "",
) -> Callable:
    """Declare the quantity a :class:`~matprops.Silicon` method serves (see the module
    notes and :class:`Quantity` for the fields). ``name`` defaults to the method's name,
    ``parts`` to one variable named after the quantity, ``models`` to the quantity
    itself (its own model file) or, with ``formula``, must list what it is built from.
    Several declarations may share one method (with different ``fixed`` arguments)."""

    def register(function: Callable) -> Callable:
        inner = getattr(function, "__wrapped__", function)
        takes, required, renames = _signature(inner)
        quantity_name = name or inner.__name__
        if formula is not None and not models:
            raise ValueError(f"derived quantity {quantity_name!r} must list its models")
        text = long_name or _first_line(inner)
        declared_parts = tuple(parts) if parts else (Part(quantity_name, text),)
        if isinstance(units, tuple) != (len(declared_parts) > 1) or (
            isinstance(units, tuple) and len(units) != len(declared_parts)
        ):
            raise ValueError(f"quantity {quantity_name!r}: one unit per part")
        for ax in wants:
            if ax not in vocabulary.AXES:
                raise ValueError(f"quantity {quantity_name!r} wants unknown axis {ax!r}")
        REGISTRY.add(
            Quantity(
                name=quantity_name,
                method=inner.__name__,
                family=inner.__module__.rpartition(".")[2],
                units=units,
                parts=declared_parts,
                models=tuple(models) if models else (quantity_name,),
                formula=formula,
                uses=tuple(uses),
                aliases=tuple(aliases),
                takes=MappingProxyType(takes),
                required=required,
                wants=tuple(wants),
                log=log,
                fixed=MappingProxyType(dict(fixed or {})),
                by_default=by_default,
                cases=tuple(cases),
                kernel=kernel,
                kernel_method=kernel_method,
                kernel_note=kernel_note,
                long_name=text,
            )
        )
        return _accepting_every_name(function, renames)

    return register


def method_of(name: str, *, cases: Sequence = ()) -> Callable:
    """Declare a further public method serving quantity ``name`` (``band_edge_shifts``
    serves ``gap_narrowing``), with reference cases of its own."""

    def register(function: Callable) -> Callable:
        inner = getattr(function, "__wrapped__", function)
        _, _, renames = _signature(inner)
        REGISTRY.serve(inner.__name__, name, cases)
        return _accepting_every_name(function, renames)

    return register
