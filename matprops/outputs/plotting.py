"""Plots of tables and model comparisons (PNG or SVG), with units and citations.

    from matprops import plotting
    plotting.plot(si.table(["intrinsic_density"], T=range(250, 401, 5)), "ni.png")
    plotting.plot(si.compare("band_gap", T=range(50, 501, 10)), "gaps.svg")

A quantity is drawn against one axis (``x``: by default the axis with the most
values among temperature, doping, excess density and wavelength); every other axis
with several values, and the ``model`` of a comparison, gives one line each. Axes
are labelled with units; quantities that span decades (densities, absorption) get a
log y axis, doping and carrier densities a log x axis. A caption line under the
plot cites the models and the release. A comparison also shows the spread across
models, in percent, in a panel below.

matplotlib is an optional dependency (``pip install 'matprops[plot]'``); it is
imported on first use, never by ``import matprops``. Files are written atomically
and an existing file is refused unless ``overwrite=True``.
"""

from __future__ import annotations

import itertools
import textwrap
from pathlib import Path

import numpy as np

from ..errors import Error, InputError

__all__ = ["FORMATS", "plot"]

FORMATS = ("png", "svg")
_SUFFIXES = {".png": "png", ".svg": "svg"}
MAX_LINES = 16


def _matplotlib():
    try:
        import matplotlib
        from matplotlib.figure import Figure
    except ImportError as exc:  # pragma: no cover - matplotlib is in the test extra
        raise Error("plots need matplotlib: pip install 'matprops[plot]'") from exc
    return matplotlib, Figure


def _x_axis(data, x):
    from ..material.tables import AXES, axis

    if x is not None:
        name = axis(x).name
        if name not in data.dims:
            raise InputError(
                "x",
                f"an axis of the table with several values "
                f"({', '.join(d for d in data.dims if d in AXES) or 'none'})",
                repr(x),
            )
        if AXES[name].category:
            raise InputError("x", "a numeric axis (not a category such as carrier)", repr(x))
        return name
    numeric = [d for d in AXES if d in data.dims and not AXES[d].category and data.sizes[d] > 1]
    if not numeric:
        raise InputError(
            "x",
            "an axis with at least two values to plot against (e.g. a temperature range)",
            "none in the table",
        )
    return max(numeric, key=lambda d: data.sizes[d])


def _label(data, name: str, width: int = 40) -> str:
    variable = data[name]
    text = variable.attrs.get("long_name", name)
    units = variable.attrs.get("units")
    if name == "temperature":
        units = variable.attrs.get("requested_units", units)
    label = f"{text} [{units}]" if units and units != "1" else text
    return "\n".join(textwrap.wrap(label, width))


def _x_values(data, x):
    values = data[x].values
    asked = data[x].attrs.get("requested_units")
    if x == "temperature" and asked and asked != "K":
        from ..units import Q_

        return Q_(values, "K").m_as(asked)
    return values


def _point(data, dim, value) -> str:
    units = data[dim].attrs.get("units", "")
    if isinstance(value, (str, np.str_)):
        return str(value) if dim == "model" else f"{dim} {value}"
    if dim == "temperature":
        asked = data[dim].attrs.get("requested_units")
        if asked and asked != "K":
            from ..units import Q_

            return f"T = {Q_(float(value), 'K').m_as(asked):g} {asked}"
        return f"T = {value:g} K"
    return f"{dim.replace('_', ' ')} {value:g} {units}".strip()


def _log_y(data, name) -> bool:
    from ..material.tables import QUANTITIES

    values = np.asarray(data[name].values, dtype=float)
    finite = values[np.isfinite(values)]
    if finite.size == 0 or finite.min() <= 0:
        return False
    entry = QUANTITIES.get(data[name].attrs.get("quantity"))
    return bool(entry and entry.log) or finite.max() / finite.min() > 1e3


def _caption(data) -> str:
    lines = [f"Sources: {data.attrs.get('references', '(none)')}".replace("\n", "; ")]
    lines.append(
        f"{data.attrs.get('source', 'matprops')}. Model estimates; defer to "
        "measured data where decisions depend on them."
    )
    if data.attrs.get("scenario_note"):
        lines.insert(0, data.attrs["scenario_note"])
    return "\n".join(textwrap.fill(line, 150) for line in lines)


def plot(
    data,
    path=None,
    *,
    x: str | None = None,
    variables=None,
    title: str | None = None,
    format: str | None = None,
    overwrite: bool = False,
):
    """Draw a table or a comparison; write it to ``path`` (.png or .svg) if given.

    Parameters
    ----------
    data : xarray.Dataset from :func:`matprops.material.tables.table` or ``compare``
    path : output file; the extension (any case) or ``format`` gives PNG or SVG
    x : axis to plot against (name or alias); default: the axis with most values
    variables : names of the variables to draw (default: all but spreads)
    title, format, overwrite : as named

    Returns
    -------
    matplotlib.figure.Figure
    """
    from .export import atomic_write, check_target, format_for

    if path is not None:
        format = format_for(path, format, _SUFFIXES, FORMATS)
        check_target(Path(path), overwrite)
    _, Figure = _matplotlib()
    data = data.compute() if any(v.chunks for v in data.variables.values()) else data
    x = _x_axis(data, x)
    names = (
        list(variables)
        if variables
        else [
            n
            for n in data.data_vars
            if not n.endswith(("spread", "_uncertainty")) and x in data[n].dims
        ]
    )
    for name in names:
        if name not in data.data_vars:
            raise InputError(
                "variables", f"variables of the table ({', '.join(data.data_vars)})", repr(name)
            )
    if not names:
        raise InputError("x", "an axis some variable depends on", repr(x))
    spreads = [f"{n}_relative_spread" for n in names if f"{n}_relative_spread" in data]
    panels = len(names) + len(spreads)
    heights = [3] * len(names) + [1.4] * len(spreads)
    caption = _caption(data)
    caption_lines = caption.count("\n") + 1
    figure = Figure(figsize=(8.0, sum(heights) + 1.2 + 0.13 * caption_lines), layout="constrained")
    axes = figure.subplots(
        panels, 1, sharex=True, squeeze=False, gridspec_kw={"height_ratios": heights}
    )[:, 0]
    xs = _x_values(data, x)
    for ax, name in zip(axes, names + spreads, strict=True):
        variable = data[name]
        others = [d for d in variable.dims if d != x]
        combos = list(itertools.product(*(range(data.sizes[d]) for d in others)))
        if len(combos) > MAX_LINES:
            raise InputError(
                "x",
                f"a plot of at most {MAX_LINES} lines per panel (one per "
                f"value of {', '.join(others)}); give fewer values",
                f"{len(combos)} lines",
            )
        for combo in combos:
            selection = variable.isel(dict(zip(others, combo, strict=True)))
            label = ", ".join(
                _point(data, d, data[d].values[i]) for d, i in zip(others, combo, strict=True)
            )
            ys = selection.transpose(x).values
            if name in spreads:
                ys = 100 * ys
            (line,) = ax.plot(xs, ys, label=label or None, linewidth=1.4)
            band = f"{name}_uncertainty"
            if band in data and name not in spreads:  # value +- standard uncertainty (k = 1)
                sigma = data[band].isel(
                    {d: i for d, i in zip(others, combo, strict=True) if d in data[band].dims}
                )
                sigma = np.broadcast_to(sigma.values, ys.shape)
                ax.fill_between(xs, ys - sigma, ys + sigma, color=line.get_color(), alpha=0.2)
        if name in spreads:
            ax.set_ylabel("spread across\nmodels [%]")
        else:
            ax.set_ylabel(_label(data, name))
            if _log_y(data, name):
                ax.set_yscale("log")
        ax.grid(True, which="major", alpha=0.3)
        if len(combos) > 1 and name not in spreads:
            ax.legend(fontsize=8, ncols=2 if len(combos) > 6 else 1)
    from ..material.tables import AXES

    if AXES[x].log and np.all(xs > 0):
        axes[-1].set_xscale("log")
    axes[-1].set_xlabel(_label(data, x, 80))
    axes[0].set_title(title or data.attrs.get("title", "matprops"), fontsize=11)
    figure.get_layout_engine().set(h_pad=0.08)
    figure.supxlabel(caption, fontsize=6.5, x=0.01, ha="left", linespacing=1.3)
    if path is not None:
        atomic_write(
            [(Path(path), lambda tmp: figure.savefig(tmp, format=format, dpi=150))], overwrite
        )
    return figure
