"""A lab's own release, from its measurements to a frozen release and its tables.

INVENTED SCENARIO: "Example Lab" is fictional, and its measurements are INVENTED (see the
headers of docs/own_release_example/*.csv: they were generated from published models with
changed coefficients plus noise). Nothing here describes a real lab, wafer or measurement.

The fictional lab re-fits two models to its own data and pins them in a release of its own:

1. the band gap (Pässler's form, passler-2002) to "photoluminescence" band gaps at 4-160 K:
   Eg(0) and alpha free, theta and Delta as published;
2. the electron mobility (Arora et al.'s form, arora-1982) to "Hall" mobilities of an n-type
   wafer at 250-450 K: the lattice term's amplitude and exponent free;
3. release "example-lab-1" on top of the shipped release 2026.2, choosing both;
4. freezes it (archive, seal, and the seal's line in a seals file kept outside the catalogue);
5. tabulates what the lab reports, each inside the range of its own data: the band gap at
   its detectors' cryogenic operating points, the electron mobility and resistivity of its
   wafers at its modules' operating temperatures, with its release and with the base, and
   writes the tables with their provenance;
6. reports one of its wafers from a wafer spec (the analyst's report, `matprops.report`)
   with its own release, and writes the report's table.

Run it with a folder for its output (made if missing; it must not hold a catalogue yet):

    python docs/own_release_example.py /tmp/example-lab-output

The same from the command line: `matprops catalogue create`, `matprops fit`, `matprops
release create`, `matprops release freeze`, then any command with `--release example-lab-1
--catalogue PATH` (`matprops report SPEC.toml --release example-lab-1 --catalogue PATH` for
step 6).
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

import matprops

HERE = Path(__file__).resolve().parent / "own_release_example"
LAB = {
    "authors": ["Example Lab (fictional)"],
    "lab": "Example Lab (fictional)",
    "year": 2027,
}
CRYOGENIC_TEMPERATURES = [20.0, 77.0, 120.0]  # K, invented detector operating points
OPERATING_TEMPERATURES = matprops.Q_([-20.0, 25.0, 85.0], "degC")  # invented
WAFER_DOPINGS = [5e14, 1e16, 1e18]  # phosphorus, cm^-3 (invented)


def fit_models(catalogue: Path, reports: Path) -> dict:
    """Fit both models, write their reports and model files; return the fits."""
    gap = matprops.fit(
        "band_gap",
        "passler-2002",
        HERE / "gap-photoluminescence.csv",
        free=["gap_at_zero", "alpha"],
        release="2026.2",
    )
    gap.report(reports / "band-gap-fit.png", note="INVENTED data (Example Lab is fictional)")
    gap.write(
        catalogue,
        "examplelab-2027",
        source={
            **LAB,
            "title": "Band gap of an undoped float-zone wafer from photoluminescence, 4-160 K "
            "(INVENTED)",
            "description": "INVENTED data: band-gap energies at 17 temperatures of one undoped "
            "wafer, each with its standard uncertainty (0.2 meV); see the file's header.",
        },
        notes="INVENTED demonstration model (docs/own_release_example.py).",
    )
    mobility = matprops.fit(
        "mobility",
        "arora-1982",
        HERE / "hall-mobility.csv",
        variant="electron",
        free=["doping_mobility", "doping_exponent"],
        inputs={"donor_density": 5e14, "acceptor_density": 0.0},
        release="2026.2",
    )
    mobility.report(reports / "mobility-fit.png", note="INVENTED data (Example Lab is fictional)")
    mobility.write(
        catalogue,
        "examplelab-2027",
        source={
            **LAB,
            "title": "Electron Hall mobility of an n-type wafer, 250-450 K (INVENTED)",
            "description": "INVENTED data: Hall mobilities of one phosphorus-doped wafer "
            "(5e14 cm^-3 in total) at 17 temperatures, Hall factor taken as 1, each with a "
            "1.5 % standard uncertainty; see the file's header.",
        },
        notes="INVENTED demonstration model (docs/own_release_example.py). Only the electron "
        "set was refitted; the hole set is Arora et al.'s.",
        conventions={
            "dopant_densities": {
                "value": "total",
                "obtained": "INVENTED: the wafer's phosphorus density as grown, from its "
                "resistivity, fed as the total donor density",
            },
            "carrier_densities": {
                "value": "complete-ionisation",
                "obtained": "INVENTED: the Hall density was taken as the donor density "
                "(complete ionisation at 250-450 K and 5e14 cm^-3)",
            },
        },
    )
    return {"band_gap": gap, "mobility": mobility}


def make_release(catalogue: Path, seals: Path) -> str:
    """Create release example-lab-1 on 2026.2 and freeze it; return the seal's digest."""
    matprops.create_release(
        "example-lab-1",
        base="2026.2",
        models={"band_gap": "examplelab-2027", "mobility": "examplelab-2027"},
        notes="INVENTED demonstration release of the fictional Example Lab: its band gap "
        "(passler-2002 refitted to its photoluminescence data) and its electron mobility "
        "(arora-1982 refitted to its Hall data) over 2026.2.",
        catalogue=catalogue,
        catalogues=[],
        seals=seals,
    )
    return matprops.freeze_release("example-lab-1", catalogues=[catalogue], seals=seals)


def tables(catalogue: Path, seals: Path, reports: Path):
    """The lab's tables with its release and with the base, and the largest changes:
    the band gap at its detectors' cryogenic operating points (inside the range of its
    gap data) and the electron mobility and resistivity of its wafers at the modules'
    operating temperatures (inside the range of its Hall data)."""
    from matprops import export

    own = matprops.silicon("example-lab-1", catalogues=[catalogue], seals=seals)
    base = matprops.silicon("2026.2")
    grids = {
        "cryogenic": (["band_gap"], {"T": CRYOGENIC_TEMPERATURES}),
        "wafers": (
            ["mobility", "resistivity"],
            {"T": OPERATING_TEMPERATURES, "Nd": WAFER_DOPINGS, "carrier": "electron"},
        ),
    }
    lines = ["largest change, example-lab-1 against 2026.2:"]
    for label, (quantities, grid) in grids.items():
        ours, theirs = own.table(quantities, **grid), base.table(quantities, **grid)
        export.write(ours, reports / f"example-lab-1-{label}.csv", overwrite=True)
        for name in quantities:
            change = 100.0 * (ours[name].values / theirs[name].values - 1.0)
            at = np.unravel_index(np.argmax(np.abs(change)), change.shape)
            where = ", ".join(
                f"{dim} {float(ours[name][dim].values[i]):g}"
                for dim, i in zip(ours[name].dims, at, strict=True)
            )
            lines.append(f"  {name}: {change[at]:+.3f} % at {where}")
    return own, "\n".join(lines)


def wafer_report(own, reports: Path):
    """Step 6: the report of one of the lab's wafers (INVENTED: a phosphorus-doped wafer of
    2.5 ohm cm as measured at 23 degC) at its modules' operating temperatures, with the
    lab's own release; its table is written beside the others."""
    from matprops import export

    spec = {
        "title": "INVENTED: an Example Lab wafer with release example-lab-1",
        "wafer": {"dopant": "phosphorus", "resistivity": "2.5 ohm cm", "measured_at": "23 degC"},
        "operating_points": {
            name: f"{t:g} degC"
            for name, t in zip(("cold", "room", "hot"), OPERATING_TEMPERATURES.m, strict=True)
        },
        "quantities": ["mobility", "resistivity"],  # inside the range of its Hall data
        "carriers": ["electron"],
    }
    result = matprops.report(spec, si=own)
    export.write(result.dataset, reports / "example-lab-1-wafer-report.csv", overwrite=True)
    return result


def main(output: Path) -> int:
    output = Path(output).expanduser().resolve()
    catalogue, seals, reports = output / "example-lab", output / "seals.txt", output / "reports"
    reports.mkdir(parents=True, exist_ok=True)
    matprops.create_catalogue(
        catalogue,
        name="example-lab",
        description="INVENTED demonstration catalogue of the fictional Example Lab "
        "(docs/own_release_example.py)",
    )
    fits = fit_models(catalogue, reports)
    for fit in fits.values():
        print(fit.summary(), end="\n\n")
    digest = make_release(catalogue, seals)
    print(f"example-lab-1 is final: seal {digest}, recorded in {seals}")
    own, summary = tables(catalogue, seals, reports)
    print(summary)
    record = own.provenance("band_gap")
    print(
        f"band_gap: model {record['model']} from {record['file']} of catalogue "
        f"{record['catalogue']['name']!r}, release {record['release']} "
        f"({record['release_status']}, on {record['release_base']})"
    )
    print(wafer_report(own, reports).text())
    print(f"reports and tables in {reports} (INVENTED data throughout)")
    return 0


if __name__ == "__main__":
    if len(sys.argv) != 2:
        print("usage: python docs/own_release_example.py OUTPUT_FOLDER", file=sys.stderr)
        raise SystemExit(2)
    raise SystemExit(main(Path(sys.argv[1])))
