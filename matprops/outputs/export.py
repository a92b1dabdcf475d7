"""Write tables to files and terminals: netCDF (CF), CSV, JSON, fixed-width text.

Every file is written atomically: the content goes to a temporary file in the
target folder, which is then linked (or renamed) to the final name, so a crash or
an error never leaves a half-written file under that name, and the temporary is
removed on an error or a KeyboardInterrupt (the ``matprops`` command removes it on
SIGTERM too, see :func:`matprops.catalogue.files.interruptible`). An existing file is
refused unless ``overwrite=True``, which replaces regular files only (never a device
such as /dev/null, a pipe, a folder, or a symbolic link to one of them).

- **netCDF**: CF-1.11 attributes; ``date_created`` and a ``history`` line with the
  timestamp and the command (or call) that made the file; provenance attributes are
  JSON strings (netCDF attributes cannot hold objects).
- **CSV**: one header row (units in the column names), readable by
  ``pandas.read_csv(path)`` and by a spreadsheet with no options. Provenance goes to
  a companion ``<name>.provenance.json`` (default) or, opt-in, to ``#`` header
  lines (then ``pandas.read_csv(path, comment="#")``). ``layout="long"`` has one row
  per grid point; ``layout="wide"`` one row per temperature (or the first axis), one
  column per variable and value of the other axes. Temperatures asked in degC are
  echoed in degC beside kelvin.
- **JSON**: xarray's dictionary layout (``xarray.Dataset.from_dict`` reads it
  back) with each variable's provenance as an object; NaN becomes null.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import json
import math
import os
import shutil
import stat
from pathlib import Path

import numpy as np

from ..catalogue import files
from ..errors import InputError
from ..material.validity import flag_of

__all__ = [
    "FORMATS",
    "estimate_size",
    "format_for",
    "json_document",
    "provenance_document",
    "to_csv",
    "to_json",
    "to_text",
    "write",
]

FORMATS = ("netcdf", "csv", "json")
MARK = "*"  # on screen: a value outside a model's validity range
LEGEND = (
    f"{MARK} outside the validity range of a model behind the value (an extrapolation); "
    "files carry the flags as <name>_validity"
)
_SUFFIXES = {".nc": "netcdf", ".nc4": "netcdf", ".csv": "csv", ".json": "json"}
LAYOUTS = ("long", "wide")


def format_for(path, format: str | None = None, suffixes=None, kinds=FORMATS) -> str:
    """The format of an output file: ``format`` if given, else from the extension
    (case-insensitive); an extension that contradicts ``format`` is an error."""
    suffixes = suffixes or _SUFFIXES
    suffix = Path(path).suffix.lower()
    implied = suffixes.get(suffix)
    if format is not None:
        format = str(format).lower()
        if format not in kinds:
            raise InputError("format", f"one of {', '.join(kinds)}", repr(format))
        if implied is not None and implied != format:
            raise InputError(
                "format",
                f"{implied} for a file named *{Path(path).suffix} "
                f"(or name the file *{_suffix_of(format, suffixes)})",
                repr(format),
            )
        return format
    if implied is None:
        known = ", ".join(sorted(suffixes))
        raise InputError(
            "format",
            f"given, or implied by the file extension ({known})",
            f"{str(path)!r} with no such extension",
        )
    return implied


def _suffix_of(format, suffixes):
    return next(s for s, f in suffixes.items() if f == format)


# --------------------------------------------------------------------------- atomic


def check_target(path, overwrite: bool = False) -> Path:
    """Refuse early, before any work: a missing folder, a folder in place of a file,
    an existing file (unless ``overwrite``), and with ``overwrite`` anything but a
    regular file (a device such as /dev/null, a pipe, a socket, a folder, or a symbolic
    link to one of them: replacing those would break the system or lose a folder)."""
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(
            "path", "a file in an existing folder", f"{str(path)!r} (no folder {str(folder)!r})"
        )
    if path.is_dir():
        raise InputError("path", "a file name, not a folder", repr(str(path)))
    kind = _kind(path)
    if kind is not None and not overwrite:
        raise InputError(
            "path",
            "a new file (--force, or overwrite=True, replaces it)",
            f"{str(path)!r}, which exists",
        )
    if kind not in (None, "regular file", "symbolic link to a regular file"):
        raise InputError(
            "path",
            "a new file or a regular file to replace (--force, or overwrite=True, replaces "
            "regular files only)",
            f"{str(path)!r}, which is a {kind}",
        )
    return path


def _kind(path: Path) -> str | None:
    """What is at ``path``: None (nothing), "regular file", "symbolic link to a regular
    file", or a description of anything else."""
    try:
        mode = os.lstat(path).st_mode
    except FileNotFoundError:
        return None
    if stat.S_ISLNK(mode):
        try:
            target = os.stat(path).st_mode
        except OSError:
            return "symbolic link to nothing"
        inner = _describe_mode(target)
        return f"symbolic link to a {inner}"
    return _describe_mode(mode)


def _describe_mode(mode: int) -> str:
    for test, name in (
        (stat.S_ISREG, "regular file"),
        (stat.S_ISDIR, "folder"),
        (stat.S_ISCHR, "character device"),
        (stat.S_ISBLK, "block device"),
        (stat.S_ISFIFO, "named pipe (FIFO)"),
        (stat.S_ISSOCK, "socket"),
    ):
        if test(mode):
            return name
    return "special file"


def atomic_write(targets: list[tuple[Path, object]], overwrite: bool = False) -> list[Path]:
    """Write each ``(path, writer)``: ``writer(tmp_path)`` fills a temporary file,
    then all are moved into place. Nothing appears under a final name unless every
    writer succeeded; on an error or a KeyboardInterrupt the temporaries are removed,
    and an application using :func:`matprops.catalogue.files.interruptible` removes
    them (and the files of an unfinished set) on SIGINT or SIGTERM too."""
    temporaries, committed = [], []
    try:
        for path, writer in targets:
            check_target(path, overwrite)
            tmp = files.temporary_for(path)
            temporaries.append(tmp)
            try:
                writer(tmp)
            except OSError as exc:
                raise InputError(
                    "path", "a file in a writable folder", f"{str(path)!r} ({exc.strerror or exc})"
                ) from exc
        for (path, _), tmp in zip(targets, temporaries, strict=True):
            replaced = _commit(tmp, path, overwrite)
            if len(targets) > 1 and not replaced:  # removed if interrupted before the last
                files.pending(path)
                committed.append(path)
    finally:
        for tmp in temporaries:
            with contextlib.suppress(OSError):
                tmp.unlink(missing_ok=True)
        files.forget(*temporaries, *committed)
    return [path for path, _ in targets]


def _commit(tmp: Path, path: Path, overwrite: bool) -> bool:
    """Move ``tmp`` to ``path``; True when an existing file was replaced."""
    if overwrite and _kind(path) is not None:
        check_target(path, overwrite)  # still a regular file (checked again: no race)
        os.replace(tmp, path)
        return True
    try:
        os.link(tmp, path)  # fails if the name exists: no race with another writer
    except FileExistsError as exc:
        if overwrite:
            return _commit(tmp, path, overwrite)
        raise InputError(
            "path",
            "a new file (--force, or overwrite=True, replaces it)",
            f"{str(path)!r}, which exists",
        ) from exc
    except OSError:  # a file system without hard links
        if path.exists() and not overwrite:
            raise InputError(
                "path",
                "a new file (--force, or overwrite=True, replaces it)",
                f"{str(path)!r}, which exists",
            ) from None
        os.replace(tmp, path)
    return False


# --------------------------------------------------------------------------- write


def write(
    data,
    path,
    format: str | None = None,
    *,
    layout: str = "long",
    provenance: str = "companion",
    overwrite: bool = False,
    command: str | None = None,
) -> list[Path]:
    """Write a table (from :func:`matprops.material.tables.table`) atomically.

    Parameters
    ----------
    data : xarray.Dataset
    path : output file; its extension (.nc, .csv, .json; any case) gives the format
    format : "netcdf", "csv" or "json" (must agree with the extension)
    layout : "long" or "wide" (CSV only)
    provenance : CSV only: "companion" (``<name>.provenance.json`` beside the file)
        or "header" (``#`` comment lines above the header row)
    overwrite : replace existing files
    command : the command line that made the table, recorded in ``history``

    Returns
    -------
    The paths written (the CSV's companion file second).
    """
    path = Path(path)
    format = format_for(path, format)
    if layout not in LAYOUTS:
        raise InputError("layout", f"one of {', '.join(LAYOUTS)}", repr(layout))
    if provenance not in ("companion", "header"):
        raise InputError("provenance", "'companion' or 'header'", repr(provenance))
    check_target(path, overwrite)
    data = stamp(data, command)
    if format == "netcdf":
        _check_netcdf_attributes(data)
        encoding = {
            name: {"_FillValue": None} for name, v in data.variables.items() if v.dtype.kind == "f"
        }
        return atomic_write(
            [(path, lambda tmp: data.to_netcdf(tmp, encoding=encoding, engine="netcdf4"))],
            overwrite,
        )
    if format == "json":
        return atomic_write(
            [(path, lambda tmp: tmp.write_text(to_json(data), encoding="utf-8"))], overwrite
        )
    targets = [
        (
            path,
            lambda tmp: tmp.write_text(
                to_csv(data, layout=layout, header=provenance == "header"), encoding="utf-8"
            ),
        )
    ]
    if provenance == "companion":
        companion = path.with_name(path.stem + ".provenance.json")
        document = provenance_document(data, describes=path.name)
        targets.append(
            (
                companion,
                lambda tmp: tmp.write_text(
                    json.dumps(document, indent=1, ensure_ascii=False) + "\n", encoding="utf-8"
                ),
            )
        )
    return atomic_write(targets, overwrite)


# bytes per value of each format, as written here (netCDF: float64; CSV: "%.10g" and a
# comma; JSON: indented one value per line; text: a column of at least 10 and 2 spaces)
_BYTES_PER_VALUE = {"netcdf": 8, "csv": 17, "json": 24, "text": 14}
_BYTES_PER_FLAG = {"netcdf": 1, "csv": 2, "json": 4, "text": 1}


def estimate_size(data, format: str, layout: str = "long") -> int:
    """An estimate of the bytes a table takes in ``format`` ("netcdf", "csv", "json" or
    "text"), from its shape alone (a lazy table is not computed)."""
    from ..material.validity import is_flag

    per_value = _BYTES_PER_VALUE.get(format, 17)
    per_flag = _BYTES_PER_FLAG.get(format, 2)  # validity flags: one digit (int8)
    flags = [v for v in data.data_vars.values() if is_flag(v)]
    if format in ("netcdf", "json"):
        count = sum(v.size for v in data.variables.values()) - sum(v.size for v in flags)
        return (
            per_value * count
            + per_flag * sum(v.size for v in flags)
            + sum(len(str(v)) for v in data.attrs.values())
        )
    dims = list(data.dims)
    rows = math.prod(data.sizes[d] for d in dims) if dims else 1
    if layout == "wide" and dims:
        count = sum(v.size for v in data.data_vars.values() if not is_flag(v))
        count += 2 * data.sizes[dims[0]]
        return per_value * count + per_flag * sum(v.size for v in flags)
    columns = (
        len(dims)
        + len(data.data_vars)
        - len(flags)
        + sum(1 for c in data.coords if c not in data.dims)
        + ("temperature" in dims)
    )
    return per_value * rows * columns + per_flag * rows * len(flags)


def stamp(data, command: str | None = None):
    """A shallow copy with ``date_created`` and a timestamped ``history`` line."""
    now = _dt.datetime.now(_dt.UTC).replace(microsecond=0).isoformat().replace("+00:00", "Z")
    data = data.copy(deep=False)
    data.attrs = dict(data.attrs)
    data.attrs["date_created"] = now
    lines = [f"{now}: {command}"] if command else []
    previous = data.attrs.get("history")
    if previous:
        lines.append(previous if previous[:4].isdigit() else f"{now}: {previous}")
    if lines:
        data.attrs["history"] = "\n".join(lines)
    return data


def _check_netcdf_attributes(data) -> None:
    def ok(value):
        if isinstance(value, (str, int, float, np.number)) and not isinstance(value, bool):
            return True
        if isinstance(value, (list, tuple, np.ndarray)):
            return all(
                isinstance(v, (int, float, np.number)) and not isinstance(v, bool)
                for v in np.asarray(value).ravel().tolist()
            )
        return False

    for where, attrs in [("dataset", data.attrs)] + [
        (f"variable {n!r}", v.attrs) for n, v in data.variables.items()
    ]:
        for key, value in attrs.items():
            if not ok(value):
                raise InputError(
                    f"attribute {key!r} of the {where}",
                    "a string, a number or a list of numbers for netCDF",
                    f"{type(value).__name__} {value!r}",
                )


# --------------------------------------------------------------------------- frames


def _dims_in_order(data) -> list[str]:
    from ..material.tables import AXES

    order = ["model"] + list(AXES)
    dims = [d for d in order if d in data.dims]
    return dims + [d for d in data.dims if d not in dims]


def _heading(data, name: str) -> str:
    units = data[name].attrs.get("units")
    return f"{name} [{units}]" if units else name


def _temperature_columns(data, values):
    """[(heading, values)] for temperature: the asked unit first, then kelvin."""
    from ..units import Q_

    asked = data["temperature"].attrs.get("requested_units")
    columns = []
    if asked and asked != "K":
        columns.append((f"temperature [{asked}]", Q_(np.asarray(values), "K").m_as(asked)))
    columns.append(("temperature [K]", np.asarray(values)))
    return columns


def frame(data, layout: str = "long"):
    """A pandas DataFrame of the table, one header row with units in the names.

    Axis columns (dimensions, then other coordinates such as labels or fixed
    values) come first; ``frame.attrs["axis_columns"]`` says how many.
    """
    import pandas as pd

    data = data.compute() if _is_lazy(data) else data
    dims = _dims_in_order(data)
    if layout == "wide" and dims:
        return _wide_frame(data, dims)
    table = data.drop_vars([n for n in ("citation",) if n in data.coords])  # long text
    if dims:
        long = table.to_dataframe(dim_order=dims).reset_index()
    else:
        long = pd.DataFrame({n: [v.item()] for n, v in table.variables.items()})
    order = dims + [c for c in table.coords if c not in dims] + list(table.data_vars)
    columns, axis_columns, flagged = {}, 0, {}
    for name in order:
        if name not in long.columns:
            continue
        if name == "temperature":
            columns.update(_temperature_columns(data, long[name].to_numpy()))
        else:
            columns[_heading(data, name)] = long[name].to_numpy()
        if name in table.coords:
            axis_columns = len(columns)
        flag = flag_of(data, name) if name in data.data_vars else None
        if flag is not None:
            flagged[_heading(data, name)] = _heading(data, flag.name)
    result = pd.DataFrame(columns)
    result.attrs["axis_columns"] = axis_columns
    result.attrs["flags"] = flagged  # value column -> its validity flag column
    return result


def _wide_frame(data, dims):
    import itertools

    import pandas as pd

    row = "temperature" if "temperature" in dims else dims[0]
    columns = {}
    index = data[row].values
    if row == "temperature":
        columns.update(_temperature_columns(data, index))
    else:
        columns[_heading(data, row)] = index
    for name in data.coords:
        if name == "citation" or name in data.dims:
            continue
        if not data[name].dims:
            columns[_heading(data, name)] = np.full(index.size, data[name].item())
        elif data[name].dims == (row,):
            columns[_heading(data, name)] = data[name].values
    axis_columns = len(columns)
    flagged = {}
    for name, variable in data.data_vars.items():
        if row not in variable.dims:
            variable = variable.expand_dims({row: index.size})
        others = [d for d in dims if d in variable.dims and d != row]
        variable = variable.transpose(row, *others)
        values = variable.values.reshape(index.size, -1)
        labels = list(itertools.product(*(data[d].values for d in others)))
        flag = flag_of(data, name)
        for k, label in enumerate(labels):
            where = ", ".join(_point(data, d, v) for d, v in zip(others, label, strict=True))
            at = f" at {where}" if where else ""
            columns[_heading(data, name) + at] = values[:, k]
            if flag is not None:
                flagged[_heading(data, name) + at] = _heading(data, flag.name) + at
    result = pd.DataFrame(columns)
    result.attrs["axis_columns"] = axis_columns
    result.attrs["flags"] = flagged
    return result


def _point(data, dim, value) -> str:
    units = data[dim].attrs.get("units")
    if isinstance(value, (str, np.str_)):
        return f"{dim}={value}"
    return f"{dim}={value:g} {units}" if units else f"{dim}={value:g}"


def _is_lazy(data) -> bool:
    return any(v.chunks is not None for v in data.variables.values())


# --------------------------------------------------------------------------- CSV


def to_csv(data, layout: str = "long", header: bool = False) -> str:
    """CSV text with one header row; ``header=True`` adds ``#`` provenance lines."""
    text = frame(data, layout).to_csv(index=False, float_format="%.10g", lineterminator="\n")
    if not header:
        return text
    lines = [f"# {key}: {' | '.join(str(value).splitlines())}" for key, value in data.attrs.items()]
    for name, variable in data.data_vars.items():
        lines.append(
            f"# {name}: {variable.attrs.get('long_name')}; model "
            f"{variable.attrs.get('model')}; {variable.attrs.get('units')}"
        )
    lines.append("# (read with pandas.read_csv(path, comment='#'))")
    return "\n".join(lines) + "\n" + text


# --------------------------------------------------------------------------- JSON


def _json_values(values: np.ndarray):
    values = np.asarray(values)
    if values.dtype.kind == "f" and not np.all(np.isfinite(values)):
        values = np.where(np.isfinite(values), values, None)  # NaN -> null
    elif values.dtype.kind in "US":
        values = values.astype(object)
    return values.tolist()


def _attrs(attrs: dict) -> dict:
    out = {}
    for key, value in attrs.items():
        if key == "provenance" and isinstance(value, str):
            value = json.loads(value)
        elif isinstance(value, np.ndarray):
            value = value.tolist()
        elif isinstance(value, np.generic):
            value = value.item()
        out[key] = value
    return out


def json_document(data) -> dict:
    """The table as xarray's dict layout, provenance as objects, NaN as null."""
    data = data.compute() if _is_lazy(data) else data
    return {
        "attrs": _attrs(data.attrs),
        "dims": {d: int(n) for d, n in data.sizes.items()},
        "coords": {
            n: {"dims": list(c.dims), "attrs": _attrs(c.attrs), "data": _json_values(c.values)}
            for n, c in data.coords.items()
        },
        "data_vars": {
            n: {"dims": list(v.dims), "attrs": _attrs(v.attrs), "data": _json_values(v.values)}
            for n, v in data.data_vars.items()
        },
    }


def to_json(data) -> str:
    return json.dumps(json_document(data), indent=1, ensure_ascii=False, allow_nan=False) + "\n"


def provenance_document(data, describes: str | None = None) -> dict:
    """Everything but the numbers: attributes, axes, and each variable's provenance."""
    document = {"describes": describes} if describes else {}
    document.update(
        {
            "attrs": _attrs(data.attrs),
            "coords": {
                n: {
                    "dims": list(c.dims),
                    "attrs": _attrs(c.attrs),
                    **(
                        {"data": _json_values(c.values)} if c.size <= 100 else {"size": int(c.size)}
                    ),
                }
                for n, c in data.coords.items()
            },
            "data_vars": {
                n: {"dims": list(v.dims), "attrs": _attrs(v.attrs)}
                for n, v in data.data_vars.items()
            },
        }
    )
    return document


# --------------------------------------------------------------------------- text


def terminal_width() -> int:
    """The terminal's width held within 80-100 columns (100 when not a terminal)."""
    return max(80, min(100, shutil.get_terminal_size((100, 24)).columns))


def _split_heading(heading: str, width: int) -> list[str]:
    name, _, units = heading.partition(" [")
    if units:  # the screen prints units as a report does: cm⁻³, cm²/(V·s), °C
        from ..units import pretty_units

        inner, _, rest = units.partition("]")
        try:
            units = (pretty_units(inner) or "1") + "]" + rest
        except Exception:  # a unit pint does not know stays as written
            pass
    lines, line = [], ""
    for piece in name.replace("_", "_\0").split("\0"):
        if line and len(line) + len(piece) > width:
            lines.append(line)
            line = ""
        line += piece
    lines.append(line)
    if units:
        lines.append("[" + units)
    return lines


def to_text(data, width: int | None = None, layout: str = "long") -> str:
    """A fixed-width table that fits ``width`` columns (default: the terminal's,
    within 80-100): long names wrap in the heading, and columns that do not fit
    continue in further blocks that repeat the axis columns."""
    width = width or terminal_width()
    table = frame(data, layout)
    if table.empty:
        return "(empty table)"
    flagged = table.attrs.get("flags", {})
    flag_columns = set(flagged.values())
    headings = [h for h in table.columns if h not in flag_columns]
    axis_count = min(table.attrs.get("axis_columns", 0), len(headings) - 1)
    cells, widths, heads = [], [], []
    marked = False
    for heading in headings:
        values = table[heading].to_numpy()
        if values.dtype.kind == "f":
            texts = [f"{v:.6g}" for v in values]
        else:
            texts = [str(v) for v in values]
        if heading in flagged:  # an extrapolated value shows with a star
            marks = table[flagged[heading]].to_numpy()
            texts = [t + MARK if m == 1 else t for t, m in zip(texts, marks, strict=True)]
            marked = marked or bool(np.any(marks == 1))
        head = _split_heading(heading, 16)
        heads.append(head)
        widths.append(max(10, max(map(len, head)), max(map(len, texts))))
        cells.append(texts)
    axes_cols = list(range(axis_count))
    blocks, current = [], []
    used = sum(widths[i] + 2 for i in axes_cols)
    for i in range(axis_count, len(headings)):
        if current and used + widths[i] + 2 > width:
            blocks.append(current)
            current, used = [], sum(widths[j] + 2 for j in axes_cols)
        current.append(i)
        used += widths[i] + 2
    blocks.append(current)
    out = []
    for block in blocks:
        columns = axes_cols + block
        depth = max(len(heads[i]) for i in columns)
        for level in range(depth):
            out.append(
                "  ".join(
                    (
                        heads[i][level - depth + len(heads[i])]
                        if level >= depth - len(heads[i])
                        else ""
                    ).rjust(widths[i])
                    for i in columns
                ).rstrip()
            )
        out.append("  ".join("-" * widths[i] for i in columns))
        for r in range(len(table)):
            out.append("  ".join(cells[i][r].rjust(widths[i]) for i in columns))
        out.append("")
    if marked:
        import textwrap

        out.append(textwrap.fill(LEGEND, width, subsequent_indent="  "))
    return "\n".join(out).rstrip() + "\n"


def comparison_text(data, width: int | None = None) -> str:
    """A model comparison for the screen: one row per grid point, one column per model
    (extrapolated values starred, missing ones NaN), then the spread across the models
    valid at that point, once, and how many they are."""
    import xarray as xr

    from ..material.validity import attributes, flag_of

    blocks = []
    quantities = [
        n for n in data.data_vars if "model" in data[n].dims and flag_of(data, n) is not None
    ]
    for name in quantities:
        variable, flag = data[name], flag_of(data, name)
        units = variable.attrs.get("units", "")
        columns = {}
        for model in data["model"].values:
            key = str(model)
            values = variable.sel(model=model, drop=True).drop_vars("citation", errors="ignore")
            flags = flag.sel(model=model, drop=True).drop_vars("citation", errors="ignore")
            columns[key] = values.assign_attrs(units=units, ancillary_variables=f"{key}_validity")
            columns[f"{key}_validity"] = flags.assign_attrs(attributes(key, key, []))
        spread = data[f"{name}_relative_spread"] * 100
        columns["spread"] = spread.assign_attrs(units="%")
        columns["valid"] = data[f"{name}_valid_models"].assign_attrs(units="")
        table = xr.Dataset(columns).drop_vars("citation", errors="ignore")
        heading = f"{name} [{units}] by model" if len(quantities) > 1 else ""
        blocks.append((heading + "\n" if heading else "") + to_text(table, width))
    return "\n".join(blocks)
