"""Plots of tables and model comparisons (PNG or SVG), with units and citations.

    from matprops import plotting
    plotting.plot(si.table(["intrinsic_density"], T=range(250, 401, 5)), "ni.png")
    plotting.plot(si.compare("band_gap", T=range(50, 501, 10)), "gaps.svg")

A quantity is drawn against one axis (``x``: by default the axis with the most
values among temperature, doping, excess density and wavelength); every other axis
with several values, and the ``model`` of a comparison, gives one line each, told
apart by colour *and* marker (so overlapping curves and grey-scale prints still show
every model). Where a model is used outside its validity range
(the table's ``<name>_validity`` flags) the line is dashed, and the legend says so.
Axes are labelled with units as a report prints them (°C, cm⁻³, cm²/(V·s));
quantities that span decades get a log y axis, densities a log x axis. A
comparison adds a panel of each model's ratio to the release's default model. A
compact footer names the sources by key and the release; the full references go
into the file's metadata (PNG text chunks, SVG Dublin Core). SVG text stays text
(editable). ``ax=`` draws into an axes of your own figure instead.

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

__all__ = ["FORMATS", "plot", "plot_report"]

FORMATS = ("png", "svg")
_SUFFIXES = {".png": "png", ".svg": "svg"}
MAX_LINES = 16
# colour and marker both differ from one line to the next (the colour-blind safe
# palette of Okabe & Ito, 2008, common practice); lines are solid where every model is
# inside its validity range and dashed where one is not, so the dash means one thing
_COLOURS = ("#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#000000", "#F0E442")
_MARKERS = ("o", "s", "^", "D", "v", "P", "X", "*")
_WIDTH = 7.0  # inches: a report's column
_DPI = 150


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


def _pretty(units: str) -> str:
    from ..units import pretty_units

    try:
        return pretty_units(units)
    except Exception:  # a unit pint does not read: as written
        return units


def _label(data, name: str, width: int = 40) -> str:
    variable = data[name]
    text = variable.attrs.get("long_name", name)
    units = variable.attrs.get("units")
    if name == "temperature":
        units = variable.attrs.get("requested_units", units)
    units = _pretty(units) if units else ""
    if not units or units == "1":
        return "\n".join(textwrap.wrap(text, width))
    words = textwrap.wrap(text, width)
    tail = f" [{units}]"
    if len(words[-1]) + len(tail) > width:  # never split a unit
        return "\n".join(words + [tail.strip()])
    words[-1] += tail
    return "\n".join(words)


def _x_values(data, x):
    values = data[x].values
    asked = data[x].attrs.get("requested_units")
    if x == "temperature" and asked and asked != "K":
        from ..units import Q_

        return Q_(values, "K").m_as(asked)
    return values


def _point(data, dim, value) -> str:
    units = _pretty(data[dim].attrs.get("units", ""))
    if isinstance(value, (str, np.str_)):
        return str(value) if dim in ("model", "region") else f"{dim} {value}"
    if dim == "temperature":
        asked = data[dim].attrs.get("requested_units")
        if asked and asked != "K":
            from ..units import Q_

            return f"T = {Q_(float(value), 'K').m_as(asked):g} {_pretty(asked)}"
        return f"T = {value:g} K"
    return f"{dim.replace('_', ' ')} {value:g} {units}".strip()


def _log_y(values, quantity) -> bool:
    from ..material.tables import QUANTITIES

    values = np.asarray(values, dtype=float)
    finite = values[np.isfinite(values)]
    if finite.size == 0 or finite.min() <= 0:
        return False
    entry = QUANTITIES.get(quantity)
    span = finite.max() / finite.min()
    return span > 1e3 or (bool(entry and entry.log) and span > 10)  # under a decade: linear


def _keys(data) -> list[str]:
    """Citation keys of the references (``[key] citation`` lines)."""
    keys = []
    for line in str(data.attrs.get("references", "")).splitlines():
        if line.startswith("[") and "]" in line:
            keys.append(line[1 : line.index("]")])
    return keys


def _caption(data) -> str:
    """The compact footer: source keys, release, caution (full references: metadata)."""
    keys = _keys(data)
    lines = []
    if data.attrs.get("scenario_note"):
        lines.append(data.attrs["scenario_note"])
    lines.append(
        ("Sources: " + ", ".join(keys) + " (full references in the file's metadata). ")
        if keys
        else ""
    )
    lines[-1] += (
        f"{data.attrs.get('source', 'matprops')}. Model estimates: defer to measured data "
        "where decisions depend on them."
    )
    return "\n".join(textwrap.fill(line, 130) for line in lines)


def _metadata(data, format: str) -> dict:
    from .._version import __version__

    title = str(data.attrs.get("title", "matprops"))
    references = str(data.attrs.get("references", ""))
    source = str(data.attrs.get("source", f"matprops {__version__}"))
    if format == "png":  # PNG text chunks
        return {
            "Title": title,
            "Description": "References:\n" + references,
            "Source": source,
            "Software": f"matprops {__version__}",
        }
    return {  # SVG: Dublin Core
        "Title": title,
        "Description": "References:\n" + references,
        "Source": source,
        "Creator": f"matprops {__version__}",
    }


def _style(index: int) -> dict:
    return {
        "color": _COLOURS[index % len(_COLOURS)],
        "linestyle": "-",
        "marker": _MARKERS[index % len(_MARKERS)],
        "markersize": 4,
        "markerfacecolor": "white",
    }


def _draw(ax, xs, ys, flags, style, label):
    """One line: solid where valid, dashed where a model is outside its range (flags 1),
    sparse markers; returns whether any part was dashed."""
    ys = np.asarray(ys, dtype=float)
    every = max(1, len(xs) // 8)
    if flags is None or not np.any(flags == 1):
        ax.plot(xs, ys, label=label, linewidth=1.5, markevery=every, **style)
        return False
    outside = flags == 1
    inside = ~outside
    # the dashed part includes the neighbours of each outside point (no gaps)
    joined = outside | np.r_[outside[1:], False] | np.r_[False, outside[:-1]]
    solid = dict(style, linestyle="-")
    ax.plot(xs, np.where(inside, ys, np.nan), label=label, linewidth=1.5, markevery=every, **solid)
    ax.plot(
        xs,
        np.where(joined, ys, np.nan),
        linewidth=1.2,
        color=style["color"],
        linestyle=(0, (4, 2.5)),
        marker=style["marker"],
        markersize=style["markersize"],
        markerfacecolor="white",
        markevery=every,
        alpha=0.9,
    )
    return True


def _extrapolated_handle():
    from matplotlib.lines import Line2D

    return Line2D(
        [],
        [],
        color="0.35",
        linestyle=(0, (4, 2.5)),
        linewidth=1.2,
        label="dashed: outside the model's validity range",
    )


def _panel(ax, data, name, x, xs, ratio_to=None):
    """Draw one variable (one line per value of its other axes) into ``ax``."""
    from ..material.validity import flag_of

    variable = data[name]
    flag = flag_of(data, name)
    others = [d for d in variable.dims if d != x]
    combos = list(itertools.product(*(range(data.sizes[d]) for d in others)))
    if len(combos) > MAX_LINES:
        raise InputError(
            "x",
            f"a plot of at most {MAX_LINES} lines per panel (one per "
            f"value of {', '.join(others)}); give fewer values",
            f"{len(combos)} lines",
        )
    reference = None
    if ratio_to is not None:
        reference = variable.sel(model=ratio_to)
    dashed = False
    everything = []
    for index, combo in enumerate(combos):
        pick = dict(zip(others, combo, strict=True))
        ys = variable.isel(pick).transpose(x).values
        flags = flag.isel(pick).transpose(x).values if flag is not None else None
        if reference is not None:
            base = reference.isel({d: i for d, i in pick.items() if d != "model"})
            with np.errstate(divide="ignore", invalid="ignore"):
                ys = ys / base.transpose(x).values
        label = (
            ", ".join(
                _point(data, d, data[d].values[i]) for d, i in pick.items() if data.sizes[d] > 1
            )
            or None
        )
        style = _style(index)
        dashed |= _draw(ax, xs, ys, flags, style, label)
        band = f"{name}_uncertainty"
        if band in data and reference is None:  # value +- standard uncertainty (k = 1)
            sigma = data[band].isel({d: i for d, i in pick.items() if d in data[band].dims})
            sigma = np.broadcast_to(
                sigma.transpose(*[d for d in (x,) if d in sigma.dims]).values, np.shape(ys)
            )
            ax.fill_between(
                xs, ys - sigma, ys + sigma, color=style["color"], alpha=0.2, linewidth=0
            )
        everything.append(ys)
    if ratio_to is not None:
        ax.axhline(1.0, color="0.6", linewidth=0.8)
        ax.set_ylabel(f"ratio to\n{ratio_to}")
    else:
        ax.set_ylabel(_label(data, name))
        if _log_y(np.concatenate(everything), variable.attrs.get("quantity")):
            ax.set_yscale("log")
    ax.grid(True, which="major", alpha=0.3)
    return len(combos), dashed


def _fixed(data, names, x) -> str:
    """What holds for every line: one-valued dimensions and scalar coordinates."""
    from ..material.tables import AXES

    parts = []
    for name in AXES:
        if name == x or name not in data.coords:
            continue
        coord = data[name]
        if coord.ndim == 0 or (name in data.dims and data.sizes[name] == 1):
            if any(name in data[n].dims or coord.ndim == 0 for n in names):
                parts.append(_point(data, name, coord.values.ravel()[0]))
    return ", ".join(parts)


def _legend(ax, lines: int, dashed: bool):
    handles, labels = ax.get_legend_handles_labels()
    if dashed:
        handles.append(_extrapolated_handle())
        labels.append(handles[-1].get_label())
    if len(handles) > 1 or dashed:
        ax.legend(
            handles, labels, fontsize=7.5, ncols=2 if len(handles) > 6 else 1, framealpha=0.85
        )


def plot(
    data,
    path=None,
    *,
    x: str | None = None,
    variables=None,
    title: str | None = None,
    format: str | None = None,
    overwrite: bool = False,
    ax=None,
):
    """Draw a table or a comparison; write it to ``path`` (.png or .svg) if given.

    Parameters
    ----------
    data : xarray.Dataset from :func:`matprops.material.tables.table` or ``compare``
    path : output file; the extension (any case) or ``format`` gives PNG or SVG
    x : axis to plot against (name or alias); default: the axis with most values
    variables : names of the variables to draw (default: every value variable)
    title, format, overwrite : as named
    ax : a matplotlib Axes to draw the (first) variable into, for a figure of your
        own: no title, footer or file; returns the Axes

    Returns
    -------
    matplotlib.figure.Figure (the Axes when ``ax`` is given)
    """
    from ..material.validity import value_names
    from .export import check_target, format_for

    if path is not None:
        if ax is not None:
            raise InputError("path", "left out with ax= (save your own figure)", repr(path))
        format = format_for(path, format, _SUFFIXES, FORMATS)
        check_target(Path(path), overwrite)
    _, Figure = _matplotlib()
    data = data.compute() if any(v.chunks for v in data.variables.values()) else data
    x = _x_axis(data, x)
    values = [
        n for n in value_names(data) if not n.endswith(("spread", "_valid_models", "_uncertainty"))
    ]
    names = list(variables) if variables else [n for n in values if x in data[n].dims]
    for name in names:
        if name not in data.data_vars:
            raise InputError(
                "variables", f"variables of the table ({', '.join(values)})", repr(name)
            )
    if not names:
        raise InputError("x", "an axis some variable depends on", repr(x))
    xs = _x_values(data, x)
    from ..material.tables import AXES

    log_x = AXES[x].log and np.all(xs > 0)
    if ax is not None:
        lines, dashed = _panel(ax, data, names[0], x, xs)
        _legend(ax, lines, dashed)
        ax.set_xlabel(_label(data, x, 60))
        if log_x:
            ax.set_xscale("log")
        return ax
    default = data.attrs.get("default_model")
    compared = "model" in data.dims and default in list(data["model"].values)
    ratios = names if compared else []
    heights = [2.6] * len(names) + [1.6] * len(ratios)
    caption = _caption(data)
    figure = Figure(
        figsize=(_WIDTH, sum(heights) + 0.55 + 0.14 * (caption.count("\n") + 1)),
        layout="constrained",
    )
    axes = figure.subplots(
        len(heights), 1, sharex=True, squeeze=False, gridspec_kw={"height_ratios": heights}
    )[:, 0]
    for ax_, name in zip(axes, names, strict=False):
        lines, dashed = _panel(ax_, data, name, x, xs)
        _legend(ax_, lines, dashed)
    for ax_, name in zip(axes[len(names) :], ratios, strict=True):
        _panel(ax_, data, name, x, xs, ratio_to=default)
    if log_x:
        axes[-1].set_xscale("log")
    axes[-1].set_xlabel(_label(data, x, 80))
    fixed = _fixed(data, names, x)
    heading = title or data.attrs.get("title", "matprops")
    axes[0].set_title(textwrap.fill(heading + (f"\n{fixed}" if fixed else ""), 90), fontsize=10)
    figure.supxlabel(caption, fontsize=6.5, x=0.01, ha="left", linespacing=1.3)
    if path is not None:
        _save(figure, data, path, format, overwrite)
    return figure


def _save(figure, data, path, format, overwrite):
    import matplotlib

    from .export import atomic_write

    def write(tmp):
        # SVG text stays text (editable in a drawing program); only for this save
        with matplotlib.rc_context({"svg.fonttype": "none"}):
            figure.savefig(tmp, format=format, dpi=_DPI, metadata=_metadata(data, format))

    return atomic_write([(Path(path), write)], overwrite)


def plot_report(report, path, *, overwrite: bool = False, format: str | None = None):
    """A report's quantities against temperature, one small panel each (two columns),
    one line per region; extrapolated parts dashed. Returns the paths written."""
    from ..material.validity import value_names
    from .export import check_target, format_for

    format = format_for(path, format, _SUFFIXES, FORMATS)
    check_target(Path(path), overwrite)
    _, Figure = _matplotlib()
    data = report.dataset
    names = [n for n in value_names(data) if "temperature" in data[n].dims]
    columns = 2
    rows = -(-len(names) // columns)
    caption = _caption(data)
    figure = Figure(
        figsize=(2 * 4.2, rows * 2.3 + 0.9 + 0.14 * (caption.count("\n") + 1)),
        layout="constrained",
    )
    axes = figure.subplots(rows, columns, sharex=True, squeeze=False).ravel()
    xs = _x_values(data, "temperature")
    order = np.argsort(xs, kind="stable")
    data = data.isel(temperature=order)
    xs = xs[order]
    dashed_any = False
    for ax, name in zip(axes, names, strict=False):
        _, dashed = _panel(ax, data, name, "temperature", xs)
        dashed_any |= dashed
        ax.set_ylabel(_label(data, name, 28), fontsize=8)
        ax.tick_params(labelsize=7.5)
    for ax in axes[len(names) :]:
        ax.set_visible(False)
    for ax in axes[-columns:]:
        ax.set_xlabel(_label(data, "temperature", 60), fontsize=8)
    handles, labels = axes[0].get_legend_handles_labels()
    for ax in axes[: len(names)]:  # every region once
        for h, lab in zip(*ax.get_legend_handles_labels(), strict=True):
            if lab not in labels:
                handles.append(h)
                labels.append(lab)
    if dashed_any:
        handles.append(_extrapolated_handle())
        labels.append(handles[-1].get_label())
    figure.suptitle(textwrap.fill(report.spec.title, 90), fontsize=10)
    holder = axes[len(names)] if len(names) < axes.size else axes[0]
    if holder is not axes[0]:  # the empty panel holds the legend
        holder.set_visible(True)
        holder.axis("off")
    holder.legend(handles, labels, fontsize=7.5, framealpha=0.85, loc="best")
    figure.supxlabel(caption, fontsize=6.5, x=0.01, ha="left", linespacing=1.3)
    return _save(figure, data, path, format, overwrite)
