"""The tables of a scenario (``datasets/scenarios/``): invented operating points of a demo.

A scenario file lists operating temperatures per site, doped regions and the
quantities to show; :func:`scenario_dataset` evaluates every listed quantity the
release serves at those points (and doping-dependent ones per region) as one
``xarray.Dataset``. The bundled scenario is INVENTED: it demonstrates the tables, it is
not measured data.
"""

from __future__ import annotations

import numpy as np

__all__ = ["scenario_dataset"]


def scenario_dataset(si, scenario: dict, path_name: str = "scenario"):
    """The scenario's table: every listed quantity the release serves, at its
    operating points (and its regions' dopings for doping-dependent quantities).

    Returns (dataset, skipped quantity names).
    """
    import xarray as xr

    from ..material.tables import AXES, QUANTITIES, available
    from ..units import Q_

    units = scenario["temperature"]["units"]
    points = []
    for site, conditions in scenario["temperature"]["sites"].items():
        for condition, value in conditions.items():
            points.append((float(value), f"{site}: {condition}"))
    points.sort()
    temperature = Q_(np.array([p[0] for p in points]), units)
    labels = np.array([p[1] for p in points])
    serves = set(available(si))
    listed = scenario["quantities"]
    shown = [q for q in listed if q in serves]
    skipped = [q for q in listed if q not in serves]
    doping = {"acceptor_density", "donor_density", "excess_density"}
    plain = [q for q in shown if not set(QUANTITIES[q].takes) & doping]
    doped = [q for q in shown if q not in plain]
    extra = {}
    if scenario.get("carriers"):
        extra["carrier"] = scenario["carriers"]
    parts = []
    if plain:
        takes = set().union(*(QUANTITIES[q].takes for q in plain))
        parts.append(
            si.table(
                plain, temperature=temperature, **{k: v for k, v in extra.items() if k in takes}
            )
        )
    if doped:
        takes = set().union(*(QUANTITIES[q].takes for q in doped))
        regions, per_region = list(scenario["regions"]), []
        for region in regions:
            spec = scenario["regions"][region]
            grid = {
                k: Q_(float(spec[k]), spec["units"])
                for k in ("acceptor_density", "donor_density", "excess_density")
                if k in spec and k in takes
            }
            grid.update({k: v for k, v in extra.items() if k in takes})
            table = si.table(doped, temperature=temperature, **grid)
            per_region.append(
                table.reset_coords(
                    [c for c in grid if c in AXES and c in table.coords and not table[c].dims],
                    drop=False,
                )
            )
        region_table = xr.concat(
            per_region,
            dim="region",
            data_vars="all",
            coords="minimal",
            compat="override",
            combine_attrs="override",
        )
        region_table = region_table.assign_coords(region=("region", np.array(regions)))
        for name in ("acceptor_density", "donor_density", "excess_density"):
            if name in region_table.data_vars:
                region_table = region_table.set_coords(name)
        parts.append(region_table)
    data = (
        xr.merge(parts, combine_attrs="override")
        if parts
        else xr.Dataset(coords={"temperature": ("temperature", temperature.m_as("K"))})
    )
    if "carrier" in data.dims:  # one variable per carrier keeps the screen table narrow
        for name in [v for v in data.data_vars if "carrier" in data[v].dims]:
            for carrier in data["carrier"].values:
                attrs = dict(data[name].attrs, carrier=str(carrier))
                attrs["long_name"] = f"{carrier} {attrs.get('long_name', name)}"
                data[f"{carrier}_{name}"] = (
                    data[name].sel(carrier=carrier, drop=True).assign_attrs(attrs)
                )
            data = data.drop_vars(name)
        data = data.drop_vars("carrier")
    data = data.assign_coords(
        operating_point=("temperature", labels, {"long_name": "invented operating point"})
    )
    data.attrs.update(
        {
            "title": scenario["title"],
            "scenario": f"{scenario['name']} ({path_name}); INVENTED data for demonstration",
            "scenario_note": "INVENTED scenario - not measured data, not a real product or site.",
        }
    )
    if data.attrs.get("references"):
        data.attrs["references"] = si.cite(
            format="text",
            quantities=list(
                dict.fromkeys(q for name in shown for q in QUANTITIES[name].model_quantities())
            ),
        )
    return data, skipped
