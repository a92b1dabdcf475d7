import shutil
import warnings

import pytest

import matprops
from matprops.catalogue.store import Catalog, datasets_root


@pytest.fixture(scope="session")
def si():
    return matprops.silicon()


@pytest.fixture(scope="session", autouse=True)
def warm_up_pint():
    # pint's first use costs ~0.3 s; pay it once so hypothesis deadlines measure physics
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        matprops.silicon().band_gap(matprops.Q_([300.0], "K"))


@pytest.fixture
def datasets_copy(tmp_path):
    """A private, writable copy of datasets/ and a Catalog over it."""
    root = tmp_path / "datasets"
    shutil.copytree(datasets_root(), root, ignore=shutil.ignore_patterns("__pycache__", "*.py"))
    return root, Catalog(root)


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
