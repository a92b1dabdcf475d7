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
    main_axes, spread_axes = figure.axes
    assert main_axes.get_yscale() == "log"  # ni spans decades
    assert len(main_axes.get_lines()) == len(matprops.models("intrinsic_density"))
    assert "[cm-3]" in main_axes.get_ylabel()
    assert "temperature [K]" in spread_axes.get_xlabel()
    caption = texts(figure)
    assert "doi:10.1063/1.4867776" in caption
    assert f"release {matprops.releases()[-1]}" in caption


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
    assert "electron density [cm-3]" in figure.axes[0].get_xlabel()
    data = si.table(["band_gap"], T=matprops.Q_(np.arange(-40.0, 86.0, 5.0), "degC"))
    figure = plotting.plot(data, tmp_path / "gap.svg")
    assert figure.axes[0].get_xlabel() == "temperature [degC]"
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
