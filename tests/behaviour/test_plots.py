"""Plots are valid images (opened with Pillow and matplotlib), carry units on their
axes, log axes where the quantity spans decades, and cite their sources."""

import warnings
import xml.etree.ElementTree as ET

import numpy as np
import pytest

import matprops
from matprops.cli import main

pytest.importorskip("matplotlib")
Image = pytest.importorskip("PIL.Image")

from matprops import plotting


def texts(figure):
    found = [t.get_text() for t in figure.texts]
    for ax in figure.axes:
        found += [ax.get_xlabel(), ax.get_ylabel(), ax.get_title()]
    return "\n".join(found)


def test_comparison_plot_png(si, tmp_path):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        data = si.compare("intrinsic_density", T=np.arange(250.0, 401.0, 10.0))
    path = tmp_path / "ni.png"
    figure = plotting.plot(data, path)
    with Image.open(path) as image:
        image.verify()
    with Image.open(path) as image:
        assert image.format == "PNG" and image.size[0] > 600
    import matplotlib.image

    assert matplotlib.image.imread(path).ndim == 3
    main_axes, ratio_axes = figure.axes
    assert main_axes.get_yscale() == "log"  # ni spans decades
    labels = main_axes.get_legend_handles_labels()[1]
    assert labels[: len(matprops.models("intrinsic_density"))] == matprops.models(
        "intrinsic_density"
    )
    # common practice: lines told apart by colour and marker, not colour alone
    solid = [line for line in main_axes.get_lines() if line.get_label() in labels]
    assert len({line.get_color() for line in solid}) == len(solid)
    assert len({line.get_marker() for line in solid}) == len(solid)
    # models outside their range: a dashed part, and the legend says what dashes mean
    assert any(line.get_linestyle() == "--" for line in main_axes.get_lines())
    legend = [t.get_text() for t in main_axes.get_legend().get_texts()]
    assert "dashed: outside the model's validity range" in legend
    assert "[cm⁻³]" in main_axes.get_ylabel()
    assert "ratio to" in ratio_axes.get_ylabel() and "couderc-2014" in ratio_axes.get_ylabel()
    assert "temperature [K]" in ratio_axes.get_xlabel()
    caption = texts(figure)
    assert "couderc-2014" in caption and "full references in the file's metadata" in caption
    assert f"release {matprops.releases()[-1]}" in caption
    # the footer stays compact: a few lines, not a paragraph of references
    footer = next(t for t in figure.texts if "Sources" in t.get_text())
    assert footer.get_text().count("\n") <= 2
    with Image.open(path) as image:  # the full references ride in the PNG's text chunks
        assert "doi:10.1063/1.4867776" in image.info["Description"]


def test_svg_in_celsius_with_log_doping_axis(si, tmp_path):
    path = tmp_path / "fca.SVG"  # upper-case extension
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        data = si.table(
            ["free_carrier_absorption"], wavelength=[1300.0, 1550.0], n=np.logspace(14, 18, 9), p=0
        )
    figure = plotting.plot(data, path)
    root = ET.parse(path).getroot()
    assert root.tag.endswith("svg")
    assert figure.axes[0].get_xscale() == "log"  # a doping axis
    assert "electron density [cm⁻³]" in figure.axes[0].get_xlabel()
    data = si.table(["band_gap"], T=matprops.Q_(np.arange(-40.0, 86.0, 5.0), "degC"))
    figure = plotting.plot(data, tmp_path / "gap.svg")
    assert figure.axes[0].get_xlabel() == "temperature [°C]"
    # SVG text stays text (editable), and the references are in its metadata
    svg = (tmp_path / "gap.svg").read_text()
    assert "<text" in svg and "temperature [°C]" in svg
    assert "doi:" in svg.split("</metadata>")[0]
    assert figure.axes[0].get_lines()[0].get_xdata()[0] == pytest.approx(-40.0)


def test_plot_refuses_what_it_cannot_draw(si, tmp_path):
    data = si.table(["band_gap"], T=[300.0])
    with pytest.raises(matprops.InputError, match="at least two values"):
        plotting.plot(data)
    with pytest.raises(matprops.InputError, match="'format'"):
        plotting.plot(si.table(["band_gap"], T=[300.0, 310.0]), tmp_path / "x.pdf")
    assert list(tmp_path.iterdir()) == []


def test_plot_command(tmp_path, capsys):
    path = tmp_path / "gaps.png"
    assert (
        main(
            [
                "plot",
                "band_gap",
                "--models",
                "passler-2002,thurmond-1975",
                "-t",
                "50:500:10",
                "-o",
                str(path),
            ]
        )
        == 0
    )
    with Image.open(path) as image:
        image.verify()
    assert (
        main(
            [
                "plot",
                "absorption",
                "-t",
                "-40,25,85degC",
                "-w",
                "400:1100:20",
                "-o",
                str(tmp_path / "a.svg"),
            ]
        )
        == 0
    )
    assert ET.parse(tmp_path / "a.svg").getroot().tag.endswith("svg")
    assert (
        main(["plot", "absorption", "-t", "25", "-w", "400:1100:20", "-o", str(path)]) == 2
    )  # exists, no --force
    assert "--force" in capsys.readouterr().err


def test_plot_into_your_own_axes(si):
    from matplotlib.figure import Figure

    figure = Figure()
    left, right = figure.subplots(1, 2)
    data = si.table(["band_gap"], T=np.arange(250.0, 401.0, 10.0))
    assert plotting.plot(data, ax=right) is right
    assert right.get_lines() and not left.get_lines()
    assert "band gap" in right.get_ylabel() and "[eV]" in right.get_ylabel()
    with pytest.raises(matprops.InputError, match="'path'"):
        plotting.plot(data, "x.png", ax=left)


def test_plot_sizes_stay_sensible(si, tmp_path):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", matprops.ValidityWarning)
        path = tmp_path / "demo.png"
        assert main(["demo", "-o", str(path)]) == 0
    with Image.open(path) as image:
        width, height = image.size
    assert 800 <= width <= 1600 and height <= 2000
