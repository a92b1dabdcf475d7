"""What the sdist and the wheel ship: the licence, the generated model catalogue, the
data, and everything the tests need to run from an unpacked sdist.

Built with hatchling's own builders (the project's build backend, in the test
extra): no network, no isolated environment, well under a second each.
"""

import tarfile
import zipfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]


def _build(target, tmp_path):
    from hatchling.builders.sdist import SdistBuilder
    from hatchling.builders.wheel import WheelBuilder

    builder = {"sdist": SdistBuilder, "wheel": WheelBuilder}[target](str(ROOT))
    (artifact,) = builder.build(directory=str(tmp_path), versions=["standard"])
    return Path(artifact)


def _on_disk(*folders):
    """Files of the checkout that a build should ship (no caches, no byte code)."""
    found = set()
    for folder in folders:
        for path in (ROOT / folder).rglob("*"):
            parts = path.relative_to(ROOT).parts
            if (
                path.is_file()
                and "__pycache__" not in parts
                and not any(p.startswith(".") for p in parts)
            ):
                found.add(path.relative_to(ROOT).as_posix())
    return found


@pytest.fixture(scope="module")
def sdist(tmp_path_factory):
    path = _build("sdist", tmp_path_factory.mktemp("sdist"))
    with tarfile.open(path) as archive:
        top = path.name.removesuffix(".tar.gz")
        names = {n.removeprefix(f"{top}/") for n in archive.getnames()}
        pkg_info = archive.extractfile(f"{top}/PKG-INFO").read().decode()
    return names, pkg_info


@pytest.fixture(scope="module")
def wheel(tmp_path_factory):
    path = _build("wheel", tmp_path_factory.mktemp("wheel"))
    with zipfile.ZipFile(path) as archive:
        names = set(archive.namelist())
        metadata = next(
            archive.read(n).decode() for n in names if n.endswith(".dist-info/METADATA")
        )
    return names, metadata


def test_licence_is_mit_for_matprops_developers():
    text = (ROOT / "LICENSE").read_text()
    assert text.startswith("MIT License") and "matprops developers" in text
    assert 'THE SOFTWARE IS PROVIDED "AS IS"' in text


def test_sdist_ships_licence_docs_and_everything_the_tests_read(sdist):
    # before: no docs/models.md (test_model_catalogue_in_docs failed from the sdist)
    # and no licence text although the metadata declared MIT
    names, pkg_info = sdist
    assert {"LICENSE", "docs/models.md", "README.md", "pyproject.toml"} <= names
    missing = _on_disk("matprops", "datasets", "tests", "docs", "benchmarks") - names
    assert not missing, f"not in the sdist: {sorted(missing)}"
    assert "License-Expression: MIT" in pkg_info and "License-File: LICENSE" in pkg_info


def test_wheel_ships_licence_and_data(wheel):
    names, metadata = wheel
    assert any(n.endswith(".dist-info/licenses/LICENSE") for n in names)
    assert "License-Expression: MIT" in metadata
    listed = (ROOT / "datasets" / "checksums.sha256").read_text().splitlines()
    data = {
        f"matprops/datasets/{line.split(maxsplit=1)[1]}"
        for line in listed
        if line.strip() and not line.startswith("#")
    }
    assert data <= names and "matprops/datasets/checksums.sha256" in names
