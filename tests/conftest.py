import shutil
import warnings

import pytest

import matprops
from matprops.catalogue.store import Catalogue, datasets_root


@pytest.fixture(scope="session")
def si():
    return matprops.silicon()


@pytest.fixture(scope="session", autouse=True)
def warm_up_pint():
    # pint's first use costs ~0.3 s; pay it once so hypothesis deadlines measure physics
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        matprops.silicon().band_gap(matprops.Q_([300.0], "K"))


DRAFT = "2030.1"  # a draft release made in a datasets copy (no shipped release has this id)


@pytest.fixture(scope="session")
def _datasets_with_draft_template(tmp_path_factory):
    """A datasets copy with a draft release DRAFT pinning the newest release's models
    and its reference evaluated, made once per test session."""
    from matprops.outputs.reference import regenerate

    root = tmp_path_factory.mktemp("draft") / "datasets"
    shutil.copytree(datasets_root(), root, ignore=shutil.ignore_patterns("__pycache__", "*.py"))
    catalogue = Catalogue(root)
    newest = catalogue.newest_release_id()
    text = (root / f"releases/{newest}.toml").read_text()
    text = text.replace(f'release = "{newest}"', f'release = "{DRAFT}"')
    text = text.replace('status = "final"', 'status = "draft"')
    (root / f"releases/{DRAFT}.toml").write_text(text)
    (root / f"releases/{DRAFT}.reference.json").write_text("{}")
    catalogue.write_checksums()
    regenerate(DRAFT, catalogue)
    return root


@pytest.fixture
def datasets_copy(tmp_path, _datasets_with_draft_template):
    """A private, writable copy of datasets/ and a Catalogue over it. Its newest release
    is the draft DRAFT pinning the newest shipped release's models, so an edited model
    file reaches the default material as in a draft (a final release refuses it)."""
    root = tmp_path / "datasets"
    shutil.copytree(_datasets_with_draft_template, root)
    return root, Catalogue(root)


@pytest.fixture
def datasets_with_draft(tmp_path, _datasets_with_draft_template):
    """A private copy of datasets/ holding a draft release (so the tests of drafts run
    even when every shipped release is final): (root, Catalogue, draft id)."""
    root = tmp_path / "datasets"
    shutil.copytree(_datasets_with_draft_template, root)
    return root, Catalogue(root), DRAFT


@pytest.fixture(scope="session")
def spawn_pool():
    """Two worker processes started with 'spawn' (as on Windows and macOS): nothing is
    inherited, so every argument, result and error crosses by pickle."""
    import multiprocessing

    from spawn_helpers import plain_pickling

    pool = multiprocessing.get_context("spawn").Pool(2, initializer=plain_pickling)
    yield pool
    pool.terminate()
    pool.join()


@pytest.fixture
def plug_quantity(monkeypatch):
    """Declare a stand-in quantity for one test, the way a family declares a real one:
    ``plug_quantity(function, units="eV", ...)`` (the keywords of
    :func:`matprops.material.registry.quantity`) makes ``function`` a Silicon method
    and registers it; a declaration of the same name is replaced. Undone afterwards."""
    from matprops.material.registry import REGISTRY, quantity

    with REGISTRY.scratch():

        def plug(function, name=None, method=None, **declaration):
            name = name or function.__name__
            function.__name__ = method or name
            if name in REGISTRY:
                REGISTRY.remove(name)
            made = quantity(name, **declaration)(function)
            monkeypatch.setattr(matprops.Silicon, function.__name__, made, raising=False)
            return made

        yield plug
