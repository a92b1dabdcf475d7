"""Validity regions: limits of one input that depend on another input.

A model's ``[validity.<input>]`` ranges are independent intervals. Some limits
are not: band-to-band absorption at low temperature ends at a shorter wavelength
than at room temperature, so the valid wavelengths depend on the temperature. A
model file declares such a limit as ``[[validity_region]]``::

    [[validity_region]]
    input = "wavelength"            # the input that is limited
    limit = "max"                   # it must stay below the bound ("min": above)
    varies_with = "temperature"     # the bound depends on this input
    points = [[10, 1031], [300, 1180]]   # [temperature, wavelength] pairs
    units = ["K", "nm"]
    reason = "why the limit is there"

The bound is linear in ``varies_with`` between the points and constant beyond the
first and last point. The catalogue parses the table into a :class:`Region`;
:meth:`matprops.catalogue.records.Model.check_regions` applies it to evaluated inputs.
"""

from __future__ import annotations

import bisect
import functools
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import DatasetError
from .fields import convert, require

__all__ = ["Region", "parse_regions"]


@dataclass(frozen=True)
class Region:
    """A validity limit of one input that depends on another input.

    ``argument`` must stay below (``limit == "max"``) or above (``"min"``) a bound
    that varies with ``by``: ``bounds`` at the points ``by_values`` (ascending),
    linear in between and constant beyond the ends. Units are the kernel's.
    """

    argument: str
    limit: str
    by: str
    by_values: tuple[float, ...]
    bounds: tuple[float, ...]
    units: str
    by_units: str
    reason: str

    @functools.cached_property
    def _points(self):
        return np.array(self.by_values), np.array(self.bounds)

    def bound_at(self, by_value):
        """The bound on ``argument`` at ``by_value`` (array in, array out)."""
        return np.interp(by_value, *self._points)

    def outside(self, value, by_value):
        """Boolean array: where (value, by_value) leaves the region (broadcast)."""
        bound = self.bound_at(by_value)
        return value > bound if self.limit == "max" else value < bound

    def _bound_point(self, by_value: float) -> float:
        """The bound at one value of ``by`` (np.interp's arithmetic, in Python)."""
        xs, bounds = self.by_values, self.bounds
        if by_value <= xs[0]:
            return bounds[0]
        if by_value >= xs[-1]:
            return bounds[-1]
        j = bisect.bisect_right(xs, by_value) - 1
        slope = (bounds[j + 1] - bounds[j]) / (xs[j + 1] - xs[j])
        return slope * (by_value - xs[j]) + bounds[j]

    def _outside_point(self, value: float, by_value: float) -> bool:
        bound = self._bound_point(by_value)
        return value > bound if self.limit == "max" else value < bound

    def bound_range(self, low: float, high: float) -> tuple[float, float]:
        """The least and greatest bound for ``by`` anywhere in ``[low, high]`` (the bound
        is piecewise linear: its extremes lie at the ends or at the points)."""
        candidates = [self._bound_point(low), self._bound_point(high)]
        candidates += [
            b for x, b in zip(self.by_values, self.bounds, strict=True) if low < x < high
        ]
        return min(candidates), max(candidates)

    def clearly_inside(self, ranges: Mapping[str, tuple[float, float]]) -> bool:
        """Whether every point lies inside the region, judged from the inputs' extremes
        alone: the largest value under the smallest bound (for a maximum)."""
        if self.argument not in ranges or self.by not in ranges:
            return False
        low, high = ranges[self.argument]
        bound_low, bound_high = self.bound_range(*ranges[self.by])
        return high <= bound_low if self.limit == "max" else low >= bound_high

    def violation(
        self,
        values: Mapping[str, Any],
        model: str,
        ranges: Mapping[str, tuple[float, float]] | None = None,
    ) -> str | None:
        """A message naming the points of ``values`` outside the region, or None.

        ``ranges`` (input -> (min, max)), when known, settle most calls without a pass
        over the points."""
        if self.argument not in values or self.by not in values:
            return None
        if np.ndim(values[self.argument]) == 0 and np.ndim(values[self.by]) == 0:
            if not self._outside_point(float(values[self.argument]), float(values[self.by])):
                return None  # one point inside (the scalar fast path): no arrays
        elif ranges is not None and self.clearly_inside(ranges):
            return None
        value, by_value = np.broadcast_arrays(
            np.asarray(values[self.argument], float), np.asarray(values[self.by], float)
        )
        outside = self.outside(value, by_value)
        if not np.any(outside):
            return None
        distance = np.where(outside, np.abs(value - self.bound_at(by_value)), -1.0)
        worst = np.unravel_index(np.argmax(distance), value.shape)
        at_value, at_by = float(value[worst]), float(by_value[worst])
        return (
            f"model {model}: {int(np.count_nonzero(outside))} of {value.size} "
            f"point(s) lie outside its validity region ({self}), e.g. "
            f"{self.argument} {at_value:g} {self.units} at {self.by} {at_by:g} "
            f"{self.by_units}, where the limit is "
            f"{float(self.bound_at(at_by)):g} {self.units}: {self.reason}; "
            "the value there is unvalidated"
        )

    def __str__(self) -> str:
        relation = "at most" if self.limit == "max" else "at least"
        points = ", ".join(
            f"{b:g} {self.units} at {v:g} {self.by_units}"
            for v, b in zip(self.by_values, self.bounds, strict=True)
        )
        return (
            f"{self.argument} {relation} a limit that depends on {self.by}: "
            f"{points}, linear in between"
        )

    def as_dict(self) -> dict:
        return {
            "input": self.argument,
            "limit": self.limit,
            "varies_with": self.by,
            "points": [[v, b] for v, b in zip(self.by_values, self.bounds, strict=True)],
            "units": [self.by_units, self.units],
            "reason": self.reason,
        }


def parse_regions(path, data: Mapping, spec) -> tuple[Region, ...]:
    """Parse a model file's ``[[validity_region]]`` entries against its kernel spec."""
    entries = data.get("validity_region", [])
    if not isinstance(entries, list):
        raise DatasetError(path, "field 'validity_region' must be a list of tables")
    regions = []
    for i, entry in enumerate(entries):
        where = f"validity_region[{i}]"
        if not isinstance(entry, dict):
            raise DatasetError(path, f"{where} must be a table")
        for name in ("input", "limit", "varies_with", "points", "units", "reason"):
            require(path, entry, name, where=where + ".")
        argument, by = entry["input"], entry["varies_with"]
        for name in (argument, by):
            if name not in spec.inputs:
                raise DatasetError(
                    path,
                    f"{where}: the kernel has no input {name!r} (inputs: {', '.join(spec.inputs)})",
                )
        if argument == by:
            raise DatasetError(path, f"{where}: 'input' and 'varies_with' must differ")
        if entry["limit"] not in ("min", "max"):
            raise DatasetError(
                path, f"{where}.limit must be 'min' or 'max', got {entry['limit']!r}"
            )
        units, points = entry["units"], entry["points"]
        if (
            not isinstance(units, list)
            or len(units) != 2
            or not isinstance(points, list)
            or len(points) < 2
            or not all(isinstance(p, list) and len(p) == 2 for p in points)
        ):
            raise DatasetError(
                path,
                f"{where}: 'points' must be a list of at least two "
                f"[{by}, {argument}] pairs and 'units' a pair of unit strings",
            )
        by_values = convert(path, where, [p[0] for p in points], units[0], spec.inputs[by])
        bounds = convert(path, where, [p[1] for p in points], units[1], spec.inputs[argument])
        if not np.all(np.diff(by_values) > 0):
            raise DatasetError(path, f"{where}: the {by} values must increase")
        regions.append(
            Region(
                argument,
                entry["limit"],
                by,
                tuple(float(v) for v in by_values),
                tuple(float(b) for b in bounds),
                spec.inputs[argument],
                spec.inputs[by],
                str(entry["reason"]),
            )
        )
    return tuple(regions)
