"""Finality lives outside the datasets folder: a final release cannot be moved by
editing data, however many guards inside the folder are re-recorded.

Regression checks of the release mechanism (see matprops/catalogue/finality.py).
"""

import json
import re
import subprocess
from pathlib import Path

import pytest

import matprops
from matprops.catalogue import checks, finality
from matprops.catalogue.store import Catalogue
from matprops.outputs import reference

# A copy of every line ever written to FINAL_SEALS: the table in the package may gain
# lines, never lose or change one.
RECORDED = {
    "2026.1": "37ea59bc53a3d47a47ddcdeb1610839f2792b707d8cf1cd30fd046d514aeff61",
    "2026.2": "581dab9a745f3e352837734a99e8a52d4e7ff2d310a3dac1b26c6e0e457b7c3f",
}

ROOT = Path(__file__).resolve().parents[2]


def test_recorded_seals_never_change():
    for release_id, digest in RECORDED.items():
        assert finality.FINAL_SEALS.get(release_id) == digest
    assert set(RECORDED) <= set(finality.FINAL_SEALS)


def test_the_seal_table_only_ever_gained_lines():
    # read the history of the file that holds the table (in a git checkout)
    path = "matprops/catalogue/finality.py"
    try:
        history = subprocess.run(
            ["git", "log", "-p", "--format=", "--", path],
            cwd=ROOT,
            capture_output=True,
            text=True,
            check=True,
        ).stdout
    except (OSError, subprocess.CalledProcessError):
        pytest.skip("not a git checkout")
    if not history:
        pytest.skip("the file has no committed history here")
    entry = re.compile(r'^-\s+"(\d{4}\.\d+)": "([0-9a-f]{64}|0{64})",')
    removed = [line for line in history.splitlines() if entry.match(line)]
    # the only line ever replaced is the placeholder the table started with
    assert all(entry.match(line).group(2) == "0" * 64 for line in removed), removed


def _toggle(path: Path, old: str, new: str) -> None:
    text = path.read_text()
    assert old in text
    path.write_text(text.replace(old, new))


def test_toggling_a_final_release_to_draft_is_refused(datasets_copy):
    root, catalogue = datasets_copy
    _toggle(root / "releases/2026.1.toml", 'status = "final"', 'status = "draft"')
    catalogue.write_checksums()
    with pytest.raises(matprops.FinalityError, match="never returns to draft"):
        matprops.Silicon(release="2026.1", catalogue=catalogue)
    with pytest.raises(matprops.FinalityError):
        reference.regenerate("2026.1", catalogue)


def test_the_whole_tamper_path_fails_a_test_and_the_catalogue_check(datasets_copy):
    # edit a coefficient of a model the final release sealed, regenerate its reference,
    # re-record the checksums and even re-write the seal: the seal's digest recorded in
    # the package code no longer matches
    root, catalogue = datasets_copy
    archived = root / "archive/2026.1/models/band_gap/passler-2002.toml"
    text = archived.read_text()
    assert "1.1701" in text
    archived.write_text(text.replace("1.1701", "1.1801"))
    catalogue.write_checksums()
    with pytest.raises(matprops.FinalityError, match="sealed by final release 2026.1"):
        matprops.Silicon(release="2026.1", catalogue=catalogue)
    reference.write_seal(catalogue, "2026.1", "2026-12-04")
    catalogue.write_checksums()
    fresh = Catalogue(root)
    with pytest.raises(matprops.FinalityError, match="is not the seal recorded"):
        matprops.Silicon(release="2026.1", catalogue=fresh)
    problems, _ = checks.check(fresh)
    assert any("2026.1.seal.json" in p and "not the seal recorded" in p for p in problems)


def test_a_release_file_cannot_claim_finality(datasets_copy):
    root, catalogue = datasets_copy
    newest = catalogue.newest_release_id()
    text = (root / f"releases/{newest}.toml").read_text()
    text = re.sub(r'release = "[^"]+"', 'release = "2030.1"', text, count=1)
    text = text.replace('status = "draft"', 'status = "final"')
    (root / "releases/2030.1.toml").write_text(text)
    (root / "releases/2030.1.reference.json").write_text("{}")
    catalogue.write_checksums()
    with pytest.raises(matprops.FinalityError, match="records no seal"):
        catalogue.release("2030.1")


@pytest.mark.slow  # about 5 s or more
def test_freezing_a_draft_end_to_end(datasets_with_draft, monkeypatch):
    root, catalogue, draft = datasets_with_draft
    assert draft == "2030.1"
    # the seal is recorded in memory only (the test must not edit the package's source)
    monkeypatch.setattr(finality, "FINAL_SEALS", dict(finality.FINAL_SEALS))
    monkeypatch.setattr(
        reference,
        "_record_seal",
        lambda release_id, digest: finality.FINAL_SEALS.__setitem__(release_id, digest),
    )
    digest = reference.freeze("2030.1", catalogue, date="2030-01-01")
    assert finality.FINAL_SEALS["2030.1"] == digest
    fresh = Catalogue(root)
    release = fresh.release("2030.1")
    assert release.final and release.date == "2030-01-01"
    seal = json.loads((root / "releases/2030.1.seal.json").read_text())
    for quantity, default in release.models.items():
        assert f"archive/2030.1/models/{quantity}/{default}.toml" in seal["files"]
    assert any(name.startswith("archive/2030.1/defects/") for name in seal["files"])
    assert reference.compare("2030.1", fresh) == []
    si = matprops.Silicon(release="2030.1", catalogue=fresh)
    assert "archive" in si.model("mobility").path.parts
    with pytest.raises(matprops.ReleaseFrozenError):
        reference.freeze("2030.1", fresh)
    # and once final, its archive is as untouchable as any final release's
    archived = root / "archive/2030.1/models/band_gap" / f"{release.models['band_gap']}.toml"
    archived.write_text(archived.read_text() + "\n# later\n")
    fresh.write_checksums()
    with pytest.raises(matprops.FinalityError):
        Catalogue(root).release("2030.1")


def test_provenance_says_where_a_final_release_read_its_model():
    record = matprops.silicon(release="2026.1").provenance("mobility")
    assert record["file"] == "archive/2026.1/models/mobility/klaassen-1992.toml"
    assert record["sealed_with_release"] is True
    assert matprops.silicon().provenance("mobility")["file"].startswith(("models/", "archive/"))
