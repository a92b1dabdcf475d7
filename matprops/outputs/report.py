"""Reports from a wafer spec: the user's silicon at their operating points.

    report = matprops.report("line-b.toml")    # a spec file, TOML text or a dict
    print(report.text())                       # one block per site, points across
    report.write("line-b.nc")                  # .nc, .csv, .json; .png, .svg: a plot
    report.dataset                             # the xarray.Dataset behind it

The spec's format is in :mod:`matprops.catalogue.spec` and the analyst's guide. The
wafer's doping comes from its resistivity *as measured*, at the temperature it was
measured at (the release's physics, inverted; or the ASTM F723 conversion at 23 degC
with ``conversion = "standard"``): the report shows that step with the density found,
the other conversion beside it, and the resistivity recomputed at that density. Every
value outside a model's validity range is starred on screen and flagged in files
(``<name>_validity``).
"""

from __future__ import annotations

import json
import textwrap
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from ..catalogue.spec import Spec, SpecError, parse_spec, parse_text, read_spec
from ..errors import Error
from ..material.validity import flag_of, value_names

if TYPE_CHECKING:
    import xarray as xr

    from ..material.silicon import Silicon

__all__ = ["Report", "SpecError", "report"]

CAUTION = (
    "Model estimates: where they feed decisions with consequences (ratings, limits, "
    "qualification), defer to measured data, local codes and licensed engineering practice."
)
_DOPING_AXES = {"acceptor_density", "donor_density", "excess_density"}
_LABEL = 34  # width of a row's label on screen
_CELL = 11


@dataclass(frozen=True)
class DopingStep:
    """The resistivity-to-doping step of a report (plain numbers: ohm cm, K, cm^-3)."""

    dopant: str
    density: float
    resistivity: float | None = None
    measured_at: float | None = None
    measured_at_text: str = ""
    conversion: str = "given"
    other_conversion: str | None = None
    other_density: float | None = None
    check_resistivity: float | None = None
    notes: tuple[str, ...] = ()

    def as_dict(self) -> dict:
        return {k: (list(v) if isinstance(v, tuple) else v) for k, v in self.__dict__.items()}

    def lines(self, width: int) -> list[str]:
        return [
            textwrap.fill(line, width, subsequent_indent=" " * (len(line) - len(line.lstrip()) + 3))
            for line in self._lines()
        ]

    def _lines(self) -> list[str]:
        from ..units import pretty_units

        kind = "acceptor" if self.dopant == "boron" else "donor"
        if self.resistivity is None:
            return [f"wafer: {self.dopant}, {kind} density {self.density:.4g} cm⁻³ (as given)"]
        out = [
            f"wafer: {self.dopant}, {self.resistivity:g} Ω·cm as measured at "
            f"{_pretty_temperature(self.measured_at_text, pretty_units)} "
            f"({self.measured_at:.2f} K)"
        ]
        how = (
            "the release's physics at the measuring temperature (equilibrium carriers and "
            "mobility), inverted"
            if self.conversion == "physics"
            else "the ASTM F723 conversion (23 °C)"
        )
        out.append(f"  -> {kind} density {self.density:.4g} cm⁻³, by {how}")
        if self.check_resistivity is not None:
            what = "check" if self.conversion == "physics" else "the release's physics"
            out.append(
                f"     {what}: resistivity at that density and {self.measured_at:.2f} K = "
                f"{self.check_resistivity:.6g} Ω·cm"
            )
        if self.other_density is not None:
            change = 100 * (self.other_density / self.density - 1)
            out.append(
                f"     the {self.other_conversion} conversion gives {self.other_density:.4g} "
                f"cm⁻³ ({change:+.1f} %)"
            )
        out.append(
            f"     every step: matprops explain doping_from_resistivity --rho "
            f"{self.resistivity:g} -t {self.measured_at:.2f}K --dopant {self.dopant}"
        )
        out += [f"     {note}" for note in self.notes]
        return out


@dataclass
class Report:
    """A report: the spec, the material it was evaluated with, the doping step, the
    table (an xarray.Dataset with validity flags) and what was left out."""

    spec: Spec
    si: Silicon
    doping: DopingStep
    dataset: xr.Dataset
    skipped: list[str] = field(default_factory=list)

    # ------------------------------------------------------------------ screen
    def text(self, width: int = 100) -> str:
        """The report for the screen: title, the doping step, one block per site with
        operating points across and quantities down (rows per region for doped
        quantities), extrapolated values starred, then release, models and caution."""
        from ..units import Q_, pretty_units

        spec, data = self.spec, self.dataset
        out = [spec.title]
        if spec.invented:
            out.append(f"(INVENTED data for demonstration; {spec.source})")
        if spec.description:
            out.append(textwrap.fill(" ".join(spec.description.split()), width))
        out += ["", *self.doping.lines(width), ""]
        regions = [str(r) for r in data["region"].values] if "region" in data.dims else []
        units = spec.temperature_units
        starred = False
        per_block = max(1, (width - _LABEL) // (_CELL + 1))
        for site in spec.sites:
            columns = [i for i, p in enumerate(self.points) if p.site == site]
            for start in range(0, len(columns), per_block):
                chunk = columns[start : start + per_block]
                out.append(f"== {site} ==" if site else "== operating points ==")
                out.append(_row("operating point", [self.points[i].name for i in chunk]))
                shown = Q_(data["temperature"].values, "K").to(units).magnitude
                out.append(
                    _row(f"temperature [{pretty_units(units)}]", [f"{shown[i]:.4g}" for i in chunk])
                )
                rows, marked = self._rows(chunk, None)
                out += rows
                starred |= marked
                for region in regions:
                    out.append(f"-- {self._region_note(region)}")
                    rows, marked = self._rows(chunk, region)
                    out += rows
                    starred |= marked
                out.append("")
        if starred:
            out.append(
                textwrap.fill(
                    "* outside the validity range of a model behind the value (an "
                    "extrapolation); in files: <name>_validity = 1",
                    width,
                )
            )
        out += self.footer(width)
        return "\n".join(out)

    @property
    def points(self):
        order = [str(v) for v in self.dataset["operating_point"].values]
        by_label = {p.label: p for p in self.spec.points}
        return [by_label[label] for label in order]

    def _region_note(self, region: str) -> str:
        na = float(self.dataset["acceptor_density"].sel(region=region))
        nd = float(self.dataset["donor_density"].sel(region=region))
        what = "the wafer" if region == "wafer" else region
        return f"{what}: Na {na:.3g}, Nd {nd:.3g} cm⁻³"

    def _rows(self, columns, region):
        from ..units import pretty_units

        data, lines, marked = self.dataset, [], False
        for name in value_names(data):
            variable = data[name]
            if ("region" in variable.dims) != (region is not None):
                continue
            flag = flag_of(data, name)
            if region is not None:
                variable = variable.sel(region=region)
                flag = flag.sel(region=region) if flag is not None else None
            unit = pretty_units(variable.attrs.get("units", "")) or "1"
            cells = []
            for i in columns:
                value = float(variable.values[i])
                text = f"{value:.4g}"
                if flag is not None and int(flag.values[i]) == 1:
                    text += "*"
                    marked = True
                cells.append(text)
            lines.append(_row(f"{name} [{unit}]", cells))
        return lines, marked

    def footer(self, width: int = 100) -> list[str]:
        si, data = self.si, self.dataset
        names = list(dict.fromkeys(data[v].attrs["quantity"] for v in value_names(data)))
        chosen = []
        for q in names:
            model = si.models.get(q)
            text = f"{q} {model}" if model else f"{q} (derived)"
            if q in si.overridden:
                text += " (overridden)"
            chosen.append(text)
        lines = [
            f"release {si.release.id} ({si.release.status}); models: " + "; ".join(chosen),
        ]
        if self.skipped:
            lines.append("not in this release, left out: " + ", ".join(self.skipped))
        lines.append(
            "each number's chain: matprops explain QUANTITY ...; a model in full: "
            "matprops describe QUANTITY [MODEL]; references: matprops cite"
        )
        lines.append(CAUTION)
        return [textwrap.fill(line, width, subsequent_indent="  ") for line in lines]

    # ------------------------------------------------------------------ files
    def write(self, path, *, overwrite: bool = False, command: str | None = None, **options):
        """Write the report: ``.nc`` (CF), ``.csv`` (+ provenance JSON), ``.json``, or a
        plot, ``.png`` / ``.svg``. Returns the paths written."""
        from . import export

        suffix = Path(path).suffix.lower()
        if suffix in (".png", ".svg"):
            from .plotting import plot_report

            return plot_report(self, path, overwrite=overwrite)
        return export.write(self.dataset, path, overwrite=overwrite, command=command, **options)


def _pretty_temperature(text: str, pretty_units) -> str:
    number, _, unit = text.strip().partition(" ")
    try:
        return f"{number} {pretty_units(unit.strip())}" if unit else text
    except Exception:  # as written
        return text


def _row(label: str, cells) -> str:
    label = label if len(label) <= _LABEL else label[: _LABEL - 1] + "…"
    return f"{label:<{_LABEL}}" + "".join(f" {c:>{_CELL}}" for c in cells)


# --------------------------------------------------------------------------- building


def _load(spec) -> Spec:
    if isinstance(spec, Spec):
        return spec
    if isinstance(spec, dict):
        return parse_spec(spec)
    if isinstance(spec, Path) or (isinstance(spec, str) and "\n" not in spec):
        return read_spec(spec)
    if isinstance(spec, str):
        return parse_text(spec)
    raise SpecError("spec", "(spec)", "must be a file path, TOML text, a dict or a Spec", spec)


def report(spec, si=None) -> Report:
    """Evaluate a wafer spec -> :class:`Report`.

    Parameters
    ----------
    spec : a spec file path, its TOML text, a dict of the same fields, or a
        :class:`~matprops.catalogue.spec.Spec`
    si : a :class:`~matprops.Silicon` to use (default: the spec's release and models,
        else the newest release)

    Examples
    --------
    >>> r = matprops.report({"title": "t", "wafer": {"dopant": "boron",
    ...     "resistivity": "1.5 ohm cm", "measured_at": "23 degC"},
    ...     "operating_points": {"noon": "45 degC"}})            # doctest: +SKIP
    >>> print(r.text())                                           # doctest: +SKIP
    """
    from ..material.silicon import Silicon

    spec = _load(spec)
    if si is None:
        si = Silicon(release=spec.release, models=dict(spec.models))
    doping = doping_step(si, spec)
    data, skipped = _dataset(si, spec, doping)
    return Report(spec=spec, si=si, doping=doping, dataset=data, skipped=skipped)


def doping_step(si, spec: Spec) -> DopingStep:
    """The wafer's dopant density, from its resistivity as measured where given, by the
    spec's conversion or the release's choice (the standard's where it holds)."""
    wafer = spec.wafer
    if wafer.resistivity is None:
        if wafer.density is None:
            raise SpecError(spec.source, "wafer", "needs a resistivity or a density")
        return DopingStep(dopant=wafer.dopant, density=wafer.density)
    measured_at = wafer.measured_at
    if measured_at is None:
        raise SpecError(spec.source, "wafer.measured_at", "goes with wafer.resistivity")
    t = np.array([measured_at])
    used = wafer.conversion or (
        "standard" if si._standard_applies(wafer.dopant, t, None)[0] else "physics"
    )
    density = float(
        si.doping_from_resistivity(
            wafer.resistivity, measured_at, wafer.dopant, conversion=used
        ).m_as("cm^-3")
    )
    other = "standard" if used == "physics" else "physics"
    notes = []
    if wafer.conversion is None:
        notes.append(f"the {used} conversion is the release's choice here")
    other_density = None
    if other == "standard" and abs(measured_at - 296.15) > 0.5:
        notes.append(
            "the standard (ASTM F723) conversion holds at 23 °C only: not shown for a "
            "resistivity measured at another temperature"
        )
    else:
        try:
            other_density = float(
                si.doping_from_resistivity(
                    wafer.resistivity, measured_at, wafer.dopant, conversion=other
                ).m_as("cm^-3")
            )
        except Error as exc:  # the other conversion may not cover the point
            notes.append(f"the {other} conversion does not apply here: {exc}")
    kind = "Na" if wafer.dopant == "boron" else "Nd"
    check = float(si.resistivity(measured_at, **{kind: density}).m_as("ohm*cm"))
    return DopingStep(
        dopant=wafer.dopant,
        density=density,
        resistivity=wafer.resistivity,
        measured_at=measured_at,
        measured_at_text=wafer.measured_at_text,
        conversion=used,
        other_conversion=other,
        other_density=other_density,
        check_resistivity=check,
        notes=tuple(notes),
    )


def _regions(spec: Spec, doping: DopingStep) -> dict[str, dict[str, float]]:
    kind = "acceptor_density" if doping.dopant == "boron" else "donor_density"
    wafer = {"acceptor_density": 0.0, "donor_density": 0.0, "excess_density": spec.wafer.excess}
    wafer[kind] = doping.density
    regions = {"wafer": wafer}
    for layer in spec.layers:
        own = "acceptor_density" if layer.dopant == "boron" else "donor_density"
        values = (
            dict(wafer)
            if layer.on_wafer
            else {
                "acceptor_density": 0.0,
                "donor_density": 0.0,
            }
        )
        values[own] = values.get(own, 0.0) + layer.density
        values["excess_density"] = layer.excess
        regions[layer.name] = values
    return regions


def _dataset(si, spec: Spec, doping: DopingStep):
    """The report's table: every quantity asked for that the release serves, at the
    operating points (sorted by temperature), per region for doped quantities."""
    import xarray as xr

    from .._version import __version__
    from ..material.tables import QUANTITIES, available
    from ..units import Q_

    points = sorted(spec.points, key=lambda p: p.temperature)
    temperature = Q_(np.array([p.temperature for p in points]), "K")
    serves = set(available(si))
    unknown = [q for q in spec.quantities if q not in QUANTITIES]
    if unknown:
        from ..errors import UnknownQuantityError

        raise UnknownQuantityError(unknown[0], QUANTITIES, "for reports")
    allowed = {"temperature", "carrier"} | _DOPING_AXES | {"electron_density", "hole_density"}
    unfit = [q for q in spec.quantities if not set(QUANTITIES[q].required) <= allowed]
    if unfit:
        raise SpecError(
            spec.source,
            "quantities",
            f"must be quantities of temperature and doping: {unfit[0]} also needs "
            f"{', '.join(a for a in QUANTITIES[unfit[0]].required if a not in allowed)}",
        )
    shown = [q for q in spec.quantities if q in serves]
    skipped = [q for q in spec.quantities if q not in serves]
    plain = [q for q in shown if not set(QUANTITIES[q].takes) & _DOPING_AXES]
    doped = [q for q in shown if q not in plain]
    carriers = list(spec.carriers)
    parts = []
    if plain:
        takes = set().union(*(QUANTITIES[q].takes for q in plain))
        extra = {"carrier": carriers} if "carrier" in takes else {}
        parts.append(si.table(plain, temperature=temperature, **extra))
    regions = _regions(spec, doping)
    if doped:
        takes = set().union(*(QUANTITIES[q].takes for q in doped))
        per_region = []
        for values in regions.values():
            grid: dict[str, object] = {k: v for k, v in values.items() if k in takes}
            if "carrier" in takes:
                grid["carrier"] = carriers
            table = si.table(doped, temperature=temperature, **grid)
            per_region.append(
                table.reset_coords([c for c in grid if c in table.coords and not table[c].dims])
            )
        region_table = xr.concat(
            per_region,
            dim="region",
            data_vars="all",
            coords="minimal",
            compat="override",
            combine_attrs="override",
        )
        region_table = region_table.assign_coords(region=("region", list(regions)))
        for name in _DOPING_AXES:
            if name in region_table.data_vars:
                region_table = region_table.set_coords(name)
        parts.append(region_table)
    data = xr.merge(parts, combine_attrs="override", compat="override")
    data = _split_carriers(data)
    for name in ("acceptor_density", "donor_density", "excess_density"):
        if name not in data.coords and "region" in data.dims:
            data = data.assign_coords(
                {name: ("region", [regions[r].get(name, 0.0) for r in regions])}
            )
        if name in data.coords:
            data[name].attrs.update({"units": "cm^-3", "long_name": name.replace("_", " ")})
    labels = np.array([p.label for p in points])
    data = data.assign_coords(
        operating_point=(
            "temperature",
            labels,
            {"long_name": "operating point" + (" (invented)" if spec.invented else "")},
        )
    )
    data["temperature"].attrs["requested_units"] = spec.temperature_units
    references = si.cite(
        format="text",
        quantities=list(
            dict.fromkeys(q for n in shown for q in QUANTITIES[n].model_quantities())
            | dict.fromkeys(["mobility", "ionisation"])
        ),
    )
    data.attrs.update(
        {
            "title": spec.title,
            "source": f"matprops {__version__}, release {si.release.id} ({si.release.status})",
            "references": references,
            "history": f"matprops {__version__}: matprops.report({spec.source!r})",
            "spec": json.dumps(spec.as_dict(), ensure_ascii=False),
            "doping_from_resistivity": json.dumps(doping.as_dict(), ensure_ascii=False),
            "doping_step": "\n".join(doping.lines(100)),
            "comment": CAUTION,
        }
    )
    if spec.invented:
        data.attrs["scenario_note"] = (
            "INVENTED scenario - not measured data, not a real product or site."
        )
    return data, skipped


def _split_carriers(data):
    """One variable per carrier (electron_mobility, hole_mobility), flags alongside:
    the screen stays narrow and each row says which carrier it is."""
    if "carrier" not in data.dims:
        return data
    for name in [v for v in value_names(data) if "carrier" in data[v].dims]:
        flag = flag_of(data, name)
        for carrier in data["carrier"].values:
            attrs = dict(data[name].attrs, carrier=str(carrier))
            attrs["long_name"] = f"{carrier} {attrs.get('long_name', name)}"
            new = f"{carrier}_{name}"
            if flag is not None:
                attrs["ancillary_variables"] = f"{new}_validity"
                data[f"{new}_validity"] = flag.sel(carrier=carrier, drop=True).assign_attrs(
                    flag.attrs
                )
            data[new] = data[name].sel(carrier=carrier, drop=True).assign_attrs(attrs)
        data = data.drop_vars([name] + ([flag.name] if flag is not None else []))
    return data.drop_vars("carrier")
