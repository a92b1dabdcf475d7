"""Fitting a closed-form model's coefficients to one's own measurements.

    import matprops
    fit = matprops.fit("band_gap", "passler-2002", "gap.csv", free=["gap_at_zero", "alpha"])
    print(fit)                                    # coefficients, uncertainties, chi2
    fit.report("gap-fit.png")                     # plot + gap-fit.csv (data, fit, residuals)
    fit.write("~/lab-catalogue", "ourlab-2027",   # a model file in an overlay catalogue
              source={"authors": ["A. Person"], "lab": "Our Lab", "year": 2027,
                      "title": "Band gap from low-temperature photoluminescence",
                      "description": "..."})

The measured values come with their standard uncertainties, as

- an ``xarray.Dataset``: a variable named after the quantity (``band_gap``) with a
  ``units`` attribute, its uncertainty ``<quantity>_uncertainty`` (or the variable its
  ``ancillary_variables`` names), and the model's inputs as coordinates or variables
  (``temperature``, ``donor_density`` ... with units);
- a CSV file that pandas reads, units in the column names as matprops writes them
  (``temperature [K]``, ``band_gap [eV]``, ``band_gap_uncertainty [eV]``; ``(eV)`` works
  too; ``#`` lines are comments);
- a mapping of names to pint quantities (or ``(values, "units")`` pairs).

Inputs the data hold at one value may instead be given as ``inputs=`` (``{"Nd": 1e15}``).

The fit is a weighted least-squares fit (``scipy.optimize.least_squares``, trust-region
reflective, on coefficients scaled by their starting values) of the free coefficients,
starting from the base model's; the others keep the base model's values. Each
coefficient stays on its side of zero unless ``bounds=`` says otherwise (a coefficient
that starts at zero is free in sign). The standard uncertainties and correlations come
from the covariance ``(J^T W J)^-1`` at the solution with the measured uncertainties taken
as standard uncertainties (``scale_covariance=True`` multiplies it by the reduced
chi-square, for data whose uncertainties are only relative). They describe the fit's
statistics under the model; they do not cover a model that cannot describe the data
(look at the residuals) or errors common to all points (a calibration).

Only closed-form models are fitted (a formula and its coefficients); a table model or a
composed model (built from other quantities' models) is refused. For a model with one
coefficient set per carrier or dopant, ``variant=`` chooses the set; coefficients shared
by every set cannot be freed (the other sets would move with them).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from ..errors import Error, InputError, UnknownNameError
from .fitfile import _printed, _split, _to_printed
from .measurements import Measurements, read_measurements

if TYPE_CHECKING:
    from ..catalogue.records import Model

__all__ = ["Fit", "fit", "read_measurements"]


# --------------------------------------------------------------------------- the fit


@dataclass(frozen=True, eq=False)
class Fit:
    """A fitted model: its coefficients with standard uncertainties and correlations,
    the fit's statistics, and the data (see :func:`fit`).

    ``values``, ``uncertainties`` and ``covariance`` are in the kernel's internal units
    (``coefficients()`` gives them in the model file's units).
    """

    quantity: str
    base: Model  # the base model (the coefficient set fitted, for a variant)
    parent: Model  # the base model as its file reads (all coefficient sets)
    release: str | None
    variant: str | None
    free: tuple[str, ...]
    values: Mapping[str, float]
    uncertainties: Mapping[str, float]
    covariance: np.ndarray
    chi2: float
    dof: int
    measurements: Measurements
    at_bound: tuple[str, ...]
    scaled: bool
    message: str

    # -- results
    @property
    def reduced_chi2(self) -> float:
        return self.chi2 / self.dof

    @property
    def correlation(self) -> np.ndarray:
        sigma = np.sqrt(np.diag(self.covariance))
        with np.errstate(invalid="ignore", divide="ignore"):
            matrix = self.covariance / np.outer(sigma, sigma)
        matrix = 0.5 * (matrix + matrix.T)
        np.fill_diagonal(matrix, 1.0)
        return np.clip(matrix, -1.0, 1.0)

    def coefficients_in_kernel_units(self) -> dict:
        """Every coefficient of the fitted set (kernel units): fitted and kept ones."""
        own = _coefficient_values(self.base)
        for name in self.free:
            _set(own, name, self.values[name])
        return own

    def evaluate(self, **inputs) -> np.ndarray:
        """The fitted model at inputs in kernel units."""
        return self.base.kernel(**inputs, **self.coefficients_in_kernel_units())

    def evaluate_base(self, **inputs) -> np.ndarray:
        return self.base.kernel(**inputs, **_coefficient_values(self.base))

    @property
    def fitted(self) -> np.ndarray:
        return self.evaluate(**self.measurements.inputs)

    @property
    def residuals(self) -> np.ndarray:
        """(data - fit) / uncertainty at every point."""
        return (self.measurements.values - self.fitted) / self.measurements.uncertainty

    def coefficients(self) -> list[dict]:
        """The free coefficients in the model file's units: name, value, standard
        uncertainty, units, the base model's value."""
        rows = []
        for name in self.free:
            printed = _printed(self.base, name)
            value, sigma = _to_printed(printed, self.values[name], self.uncertainties[name])
            base_value, _ = _to_printed(printed, _get(_coefficient_values(self.base), name), 0.0)
            rows.append(
                {
                    "coefficient": name,
                    "value": value,
                    "uncertainty": sigma,
                    "units": printed.units,
                    "base": base_value,
                }
            )
        return rows

    def validity(self) -> dict[str, tuple[float, float, str]]:
        """input -> (min, max, note) in kernel units: the data's range where the data
        span one; the base model's range (and a note saying so) where they hold one value."""
        ranges = {}
        for argument, values in self.measurements.inputs.items():
            low, high = float(values.min()), float(values.max())
            if low < high:
                ranges[argument] = (low, high, "")
                continue
            base = self.base.validity.get(argument)
            note = (
                f"the data hold {argument} at {low:g} {self.base.inputs[argument]}; its range "
                f"is the base model's"
            )
            if base is not None:
                ranges[argument] = (base.low, base.high, note)
        return ranges

    def summary(self) -> str:
        lines = [
            f"fit of {self.quantity}/{self.base.id}"
            + (f" ({self.variant})" if self.variant else "")
            + f" to {self.measurements.points} points"
            + (f" (release {self.release})" if self.release else ""),
            f"chi2 = {self.chi2:.4g} for {self.dof} degrees of freedom "
            f"(reduced {self.reduced_chi2:.3g}); normalised residuals rms "
            f"{np.sqrt(np.mean(self.residuals**2)):.3g}, max {np.abs(self.residuals).max():.3g}",
        ]
        width = max(len(n) for n in self.free)
        for row in self.coefficients():
            lines.append(
                f"  {row['coefficient']:<{width}}  {row['value']:.6g} +- {row['uncertainty']:.2g}"
                f" {row['units']}  (base {row['base']:.6g})"
            )
        if len(self.free) > 1:
            lines.append("correlation:")
            for name, row in zip(self.free, self.correlation, strict=True):
                lines.append(f"  {name:<{width}}  " + "  ".join(f"{r:+.3f}" for r in row))
        if self.at_bound:
            lines.append(
                f"at a bound: {', '.join(self.at_bound)} (its uncertainty is not reliable)"
            )
        if self.scaled:
            lines.append("uncertainties scaled by sqrt(reduced chi2)")
        return "\n".join(lines)

    def __str__(self) -> str:
        return self.summary()

    def __repr__(self) -> str:
        return f"<Fit {self.quantity}/{self.base.id}: {', '.join(self.free)}>"

    # -- files
    def table(self):
        """A pandas DataFrame: the inputs, the data, their uncertainty, the fit, the base
        model and the normalised residuals, one row per point (kernel units)."""
        import pandas as pd

        spec = self.base.kernel.spec
        m = self.measurements
        columns = {f"{k} [{spec.inputs[k]}]": v for k, v in m.inputs.items()}
        units = spec.output
        base = self.evaluate_base(**m.inputs)
        columns.update(
            {
                f"{self.quantity} [{units}]": m.values,
                f"{self.quantity}_uncertainty [{units}]": m.uncertainty,
                f"fit [{units}]": self.fitted,
                f"{self.base.id} [{units}]": base,
                "residual / uncertainty": self.residuals,
                f"{self.base.id} residual / uncertainty": (m.values - base) / m.uncertainty,
            }
        )
        return pd.DataFrame(columns)

    def report(self, path, *, title: str | None = None, note: str = "", overwrite=False):
        """Write the fit report: a plot (``path``, .png or .svg: data with error bars,
        the fit, the base model, normalised residuals) and beside it the table
        (``<path>.csv``) and the summary (``<path>.txt``). Returns the paths."""
        from .export import atomic_write

        path = Path(path).expanduser()
        if path.suffix.lower() not in (".png", ".svg"):
            raise InputError("path", "a .png or .svg file", repr(str(path)))
        figure = self._figure(title, note)
        table = self.table()
        summary = self.summary() + (f"\n{note}" if note else "") + "\n"
        return atomic_write(
            [
                (path, lambda tmp: figure.savefig(tmp, format=path.suffix[1:].lower(), dpi=150)),
                (
                    path.with_suffix(".csv"),
                    lambda tmp: tmp.write_text(table.to_csv(index=False, float_format="%.10g")),
                ),
                (path.with_suffix(".txt"), lambda tmp: tmp.write_text(summary)),
            ],
            overwrite,
        )

    def _figure(self, title, note):
        from .plotting import _matplotlib

        _, Figure = _matplotlib()
        m = self.measurements
        x_name = max(m.inputs, key=lambda k: _spread(m.inputs[k]))
        x = m.inputs[x_name]
        spec = self.base.kernel.spec
        log_x = x.min() > 0 and x.max() / x.min() > 100
        figure = Figure(figsize=(7.0, 6.2), layout="constrained")
        top, bottom = figure.subplots(2, 1, sharex=True, gridspec_kw={"height_ratios": [2.2, 1.0]})
        top.errorbar(
            x, m.values, yerr=m.uncertainty, fmt="o", ms=3.5, color="k", label="data (+-1 sigma)"
        )
        others = [k for k in m.inputs if k != x_name and _spread(m.inputs[k]) > 0]
        if others:  # several inputs vary: the models at the data's points
            order = np.argsort(x)
            top.plot(x[order], self.fitted[order], "s", ms=3, mfc="none", label="fit")
            base = self.evaluate_base(**m.inputs)
            top.plot(x[order], base[order], "^", ms=3, mfc="none", label=self.base.id)
        else:
            grid = (
                np.geomspace(x.min(), x.max(), 300) if log_x else np.linspace(x.min(), x.max(), 300)
            )
            inputs = {k: np.full(grid.shape, v[0]) for k, v in m.inputs.items()}
            inputs[x_name] = grid
            top.plot(grid, self.evaluate(**inputs), "-", color="C0", label="fit")
            top.plot(
                grid,
                self.evaluate_base(**inputs),
                "--",
                color="C1",
                label=f"{self.base.id} (published)",
            )
        top.set_ylabel(f"{self.quantity} [{spec.output}]")
        top.legend(fontsize=8)
        top.set_title(
            title or f"{self.quantity}: {self.base.id} refitted ({', '.join(self.free)} free)",
            fontsize=10,
        )
        bottom.axhspan(-2, 2, color="0.92", label="+-2 sigma")
        bottom.axhline(0, color="0.5", lw=0.8)
        base_residuals = (m.values - self.evaluate_base(**m.inputs)) / m.uncertainty
        bottom.plot(x, base_residuals, "^", ms=3, mfc="none", color="C1", label=self.base.id)
        bottom.plot(x, self.residuals, "o", ms=3.5, color="C0", label="fit")
        bottom.set_ylabel("(data - model) / sigma")
        bottom.set_xlabel(f"{x_name} [{spec.inputs[x_name]}]")
        bottom.legend(fontsize=8)
        if log_x:
            bottom.set_xscale("log")
        caption = (
            f"chi2/dof = {self.chi2:.3g}/{self.dof}; "
            + "; ".join(
                f"{r['coefficient']} = {r['value']:.5g} +- {r['uncertainty']:.2g} {r['units']}"
                for r in self.coefficients()
            )
            + (f"\n{note}" if note else "")
        )
        figure.text(0.01, 0.0, caption, fontsize=7, va="bottom", wrap=True)
        figure.get_layout_engine().set(rect=(0, 0.06, 1, 0.94))
        return figure

    def write(
        self,
        catalogue,
        model_id: str,
        *,
        source: Mapping,
        name: str | None = None,
        notes: str = "",
        conventions: Mapping[str, Mapping] | None = None,
        overwrite: bool = False,
    ) -> Path:
        """Write the fitted model into an overlay catalogue (a folder, see
        :mod:`matprops.catalogue.overlay`): the data as ``measurements/<quantity>-<model_id>.csv``
        and the model file ``models/<quantity>/<model_id>.toml``, then re-record the
        catalogue's checksums and load the new file once through it (schema, units,
        conventions); on any failure the catalogue is left as it was. Returns the
        model file's path.

        ``source``: ``authors`` (who measured), ``year``, ``title``, ``description``
        (what was measured, how, on what samples), optionally ``lab`` and ``doi``.
        ``conventions``: the model's fit conventions, ``{name: {"value": ...,
        "obtained": ...}}`` (a composed quantity's file must state them; default: the
        base model's, marked as assumed).
        """
        from .fitfile import write

        return write(
            self,
            catalogue,
            model_id,
            source=source,
            name=name,
            notes=notes,
            conventions=conventions,
            overwrite=overwrite,
        )

    def model_file(self, model_id: str, **fields) -> tuple[str, str]:
        """The text of the fitted model's file and the name of its data file (the
        fields as for :meth:`write`)."""
        from .fitfile import model_file

        return model_file(self, model_id, **fields)


# --------------------------------------------------------------------------- coefficients


def _coefficient_values(model) -> dict:
    """Coefficient name -> kernel value (vectors as float arrays, copied)."""
    return {
        c.name: np.array(c.kernel_value, dtype=float)
        if np.ndim(c.kernel_value)
        else float(c.kernel_value)
        for c in model.coefficients.values()
    }


def _get(values: Mapping, element: str) -> float:
    name, index = _split(element)
    value = values[name]
    return float(value if index is None else value[index])


def _set(values: dict, element: str, number: float) -> None:
    name, index = _split(element)
    if index is None:
        values[name] = float(number)
    else:
        values[name] = np.array(values[name], dtype=float)
        values[name][index] = number


def _spread(values: np.ndarray) -> float:
    return float(np.ptp(values)) / (float(np.abs(values).max()) or 1.0)


def _free_elements(model, free, shared: set) -> tuple[str, ...]:
    if free is None:
        elements = []
        for c in model.coefficients.values():
            if c.name in shared:
                continue
            if np.ndim(c.kernel_value):
                elements += [f"{c.name}[{i}]" for i in range(np.size(c.kernel_value))]
            else:
                elements.append(c.name)
        return tuple(elements)
    if isinstance(free, str):
        free = [part.strip() for part in free.split(",") if part.strip()]
    elements = []
    for element in free:
        name, index = _split(element)
        if name not in model.coefficients:
            raise UnknownNameError(
                name, model.coefficients, f"among the coefficients of {model.id} (free=)"
            )
        if name in shared:
            raise InputError(
                "free",
                f"coefficients of the {model.variant} set (a shared coefficient such as "
                f"{name!r} moves every set of {model.id})",
                name,
            )
        size = np.size(model.coefficients[name].kernel_value)
        is_vector = bool(np.ndim(model.coefficients[name].kernel_value))
        if is_vector and index is None:
            elements += [f"{name}[{i}]" for i in range(size)]
        elif index is not None and (not is_vector or index >= size):
            raise InputError("free", f"{name} has {size} element(s)", element)
        else:
            elements.append(element)
    if len(set(elements)) != len(elements) or not elements:
        raise InputError("free", "distinct coefficient names, at least one", repr(free))
    return tuple(elements)


def _bounds(model, elements, given) -> tuple[np.ndarray, np.ndarray]:
    """Sign-preserving bounds in kernel units, overridden by ``given`` (printed units or
    pint quantities) coefficient by coefficient."""
    from ..units import Q_, unit

    start = _coefficient_values(model)
    low, high = [], []
    given = dict(given or {})
    unknown = set(given) - {*elements, *(_split(e)[0] for e in elements)}
    if unknown:
        raise InputError("bounds", f"bounds of free coefficients ({', '.join(elements)})", unknown)
    for element in elements:
        value = _get(start, element)
        lo, hi = (0.0, np.inf) if value > 0 else (-np.inf, 0.0) if value < 0 else (-np.inf, np.inf)
        pair = given.get(element, given.get(_split(element)[0]))
        if pair is not None:
            coefficient = _printed(model, element)
            converted: list[float | None] = []
            for end in pair:
                if end is None:
                    converted.append(None)
                elif hasattr(end, "magnitude"):
                    converted.append(float(end.m_as(unit(coefficient.kernel_units))))
                else:
                    printed = Q_(float(end), unit(coefficient.units))
                    converted.append(float(printed.m_as(unit(coefficient.kernel_units))))
            lo = -np.inf if converted[0] is None else converted[0]
            hi = np.inf if converted[1] is None else converted[1]
            if not lo < hi:
                raise InputError("bounds", f"(low, high) with low < high for {element}", pair)
            if not lo <= value <= hi:
                raise InputError(
                    "bounds",
                    f"a range holding the base model's {element} = {value:g} (the start)",
                    pair,
                )
        low.append(lo)
        high.append(hi)
    return np.array(low), np.array(high)


def fit(
    quantity: str,
    model,
    data,
    *,
    free: Sequence[str] | str | None = None,
    inputs: Mapping | None = None,
    variant: str | None = None,
    bounds: Mapping | None = None,
    scale_covariance: bool = False,
    release: str | None = None,
    catalogues: Sequence | None = None,
    seals=None,
) -> Fit:
    """Fit a closed-form model's coefficients to measured values (weighted least squares).

    Parameters
    ----------
    quantity : str
        The quantity measured (``"band_gap"``, ``"mobility"``).
    model : str or Model
        The id of the model to start from (its form and every coefficient not freed),
        as ``release`` reads it (default: the newest shipped release), or the model
        itself (``si.model("band_gap")``).
    data : xarray.Dataset, CSV path or mapping of quantities
        The measured values with standard uncertainties and the model's inputs; see
        :mod:`matprops.outputs.fitting`.
    free : list of coefficient names, optional
        The coefficients to fit (``"name[i]"`` for one element of a vector); default
        every coefficient of the set.
    inputs : mapping, optional
        Inputs the data hold at one value (``{"Nd": 1e15, "Na": 0}``; numbers in the
        kernel's units, or pint quantities).
    variant : str, optional
        The coefficient set of a model with one per carrier or dopant (``"electron"``).
    bounds : mapping of name -> (low, high), optional
        Bounds in the model file's units (or pint quantities; None for no bound);
        default: each coefficient keeps its sign.
    scale_covariance : bool
        Scale the covariance by the reduced chi-square (for relative uncertainties).
    release, catalogues, seals
        Where the base model is read (see :func:`matprops.silicon`).

    Returns
    -------
    Fit
        ``print(fit)``; ``fit.report(path)``; ``fit.write(catalogue, model_id, source=...)``.
    """
    from scipy.optimize import least_squares

    from ..material.registry import REGISTRY
    from ..material.silicon import silicon
    from ..units import name as quantity_name

    quantity = REGISTRY.canonical(quantity_name(quantity))
    if isinstance(model, str):
        si = silicon(release=release, catalogues=catalogues, seals=seals)
        parent = si.catalogue.model(quantity, model)
        release = si.release.id
    else:  # a Model (si.model("band_gap"), a catalogue's): the file it was read from
        parent = model.catalogue.model(model.quantity, model.id) if model.variant else model
        if model.quantity != quantity:
            raise InputError("model", f"a model of {quantity}", f"{model.quantity}/{model.id}")
        variant = variant if variant is not None else model.variant
    model = parent.id
    if parent.kind != "closed-form" or parent.requires:
        raise InputError(
            "model",
            "a closed-form model (a formula and its coefficients)",
            f"{quantity}/{model}, a {parent.kind} model"
            + (f" built from {', '.join(parent.requires)}" if parent.requires else ""),
        )
    if parent.variants:
        if variant is None:
            raise InputError(
                "variant",
                f"one of {', '.join(parent.variants)} ({parent.variant_axis}: {model} has one "
                "coefficient set each)",
                "none",
            )
        from ..vocabulary import canonical

        axis = parent.variant_axis
        name = canonical(axis, variant, "variant") if axis in ("carrier", "dopant") else variant
        base = parent.select(name)
        variant = name
        shared = set(parent.coefficients)
    else:
        if variant is not None:
            raise InputError("variant", f"none ({model} has one coefficient set)", repr(variant))
        base = parent
        shared = set()
    elements = _free_elements(base, free, shared)
    measurements = read_measurements(data, quantity, base, inputs)
    points, k = measurements.points, len(elements)
    if points <= k:
        raise InputError("data", f"more points than free coefficients ({k})", f"{points} points")
    start = _coefficient_values(base)
    x0 = np.array([_get(start, e) for e in elements])
    scale = np.where(x0 != 0, np.abs(x0), 1.0)
    low, high = _bounds(base, elements, bounds)
    y, sigma = measurements.values, measurements.uncertainty
    arguments = measurements.inputs

    def model_values(p):
        values = dict(start)
        for element, number in zip(elements, p, strict=True):
            _set(values, element, number)
        with np.errstate(all="ignore"):
            return np.asarray(base.kernel(**arguments, **values), dtype=float)

    def residual(u):
        r = (y - model_values(u * scale)) / sigma
        return np.where(np.isfinite(r), r, 1e30)

    u0 = np.clip(x0 / scale, low / scale, high / scale)
    solution = least_squares(
        residual,
        u0,
        bounds=(low / scale, high / scale),
        method="trf",
        x_scale=1.0,
        ftol=1e-14,
        xtol=1e-14,
        gtol=1e-14,
        max_nfev=2000 * (k + 1),
    )
    if not np.all(np.isfinite(solution.fun)) or np.any(np.abs(solution.fun) >= 1e29):
        raise Error(
            f"the fit of {quantity}/{model} left the model's domain (the model gives no "
            f"finite value at some points): {solution.message}"
        )
    u = solution.x
    jacobian = _central_jacobian(residual, u, low / scale, high / scale)
    chi2 = float(np.sum(solution.fun**2))
    dof = points - k
    covariance = _covariance(jacobian, elements) * np.outer(scale, scale)
    scaled = bool(scale_covariance)
    if scaled:
        covariance = covariance * chi2 / dof
    values = u * scale
    # at a bound within 1e-8 of the coefficient's own scale (its starting value)
    at_bound = tuple(
        e
        for e, v, lo, hi in zip(elements, u, low / scale, high / scale, strict=True)
        if abs(v - lo) <= 1e-8 or abs(v - hi) <= 1e-8
    )
    return Fit(
        quantity=quantity,
        base=base,
        parent=parent,
        release=release,
        variant=variant,
        free=elements,
        values=dict(zip(elements, values.tolist(), strict=True)),
        uncertainties=dict(zip(elements, np.sqrt(np.diag(covariance)).tolist(), strict=True)),
        covariance=covariance,
        chi2=chi2,
        dof=dof,
        measurements=measurements,
        at_bound=at_bound,
        scaled=scaled,
        message=str(solution.message),
    )


def _central_jacobian(residual, u, low, high) -> np.ndarray:
    """d residual / d u by central differences (one-sided at a bound)."""
    columns = []
    for i in range(u.size):
        step = 1e-6 * max(abs(u[i]), 1.0)
        up, down = u.copy(), u.copy()
        up[i] = min(u[i] + step, high[i])
        down[i] = max(u[i] - step, low[i])
        columns.append((residual(up) - residual(down)) / (up[i] - down[i]))
    return np.column_stack(columns)


def _covariance(jacobian: np.ndarray, elements) -> np.ndarray:
    """(J^T J)^-1 through the SVD; coefficients the data do not determine are an error."""
    _, singular, vt = np.linalg.svd(jacobian, full_matrices=False)
    if singular[-1] <= singular[0] * 1e-12:
        weak = [elements[i] for i in np.flatnonzero(np.abs(vt[-1]) > 0.3)]
        raise Error(
            "the data do not determine the free coefficients "
            f"{', '.join(weak) or ', '.join(elements)} separately (the fit's matrix is singular): "
            "free fewer coefficients or measure over a wider range"
        )
    return (vt.T / singular**2) @ vt
