"""Validity warnings are never filtered process-wide.

A table checks validity once, on its grid's extremes, and evaluates its blocks with a
material that knows the inputs were checked already: it never touches the warning
filters. Here threads build large tables (eager, and lazy ones computed by dask's
threaded scheduler) while another thread calls out of range again and again; every
one of those calls must warn. The warning filters of this test turn ValidityWarning
into an error (pytest.ini's ``error::matprops.errors.ValidityWarning``), so a call that
warns raises, and a call whose warning was swallowed by a filter that another thread
installed returns quietly. Before the fix, a thread building a large table switched
validity warnings off for the whole process while it ran (200 calls: 0 warnings).
"""

import threading
import warnings

import dask
import dask.array  # (imported first: importing it adds warning filters of its own)
import numpy as np
import pytest

import matprops


def _warm(si):
    """Import and build once what the threads use: imports add warning filters."""
    si.table(["band_gap", "intrinsic_density"], T=[300.0, 310.0], chunks=1).compute()
    si.table(["mobility"], T=300.0, Na=[1e15, 1e16], carrier="electron")


def _builders(si, stop: threading.Event, failures: list):
    """Threads that build tables until ``stop`` is set (inside every validity range)."""
    temperature = np.linspace(250.0, 450.0, 600)
    doping = np.geomspace(1e14, 1e18, 600)  # 3.6e5 points: evaluated in blocks

    def eager():
        try:
            while not stop.is_set():
                si.table(["band_gap", "mobility"], T=temperature, Na=doping, carrier="electron")
        except BaseException as exc:  # reported by the test
            failures.append(exc)

    def lazy():
        try:
            while not stop.is_set():
                data = si.table(
                    ["intrinsic_density", "band_gap"],
                    T=np.linspace(250.0, 450.0, 1_200_000),
                    chunks=300_000,  # blocks of the graph larger than a table block
                )
                with dask.config.set(scheduler="threads"):
                    data.compute()
        except BaseException as exc:
            failures.append(exc)

    return [
        threading.Thread(target=eager),
        threading.Thread(target=eager),
        threading.Thread(target=lazy),
    ]


@pytest.mark.filterwarnings("error::matprops.errors.ValidityWarning")
def test_every_out_of_range_call_warns_while_other_threads_build_tables():
    si = matprops.silicon()
    _warm(si)
    filters, show = list(warnings.filters), warnings.showwarning
    stop, failures = threading.Event(), []
    builders = _builders(si, stop, failures)
    for thread in builders:
        thread.start()
    warned = quiet = 0
    try:
        for _ in range(200):
            try:
                si.band_gap(2000.0)  # outside passler-2002's 0-600 K
            except matprops.ValidityWarning:
                warned += 1
            else:
                quiet += 1
    finally:
        stop.set()
        for thread in builders:
            thread.join()
    assert not failures, failures
    assert (warned, quiet) == (200, 0)
    # nothing changed the process's warning state
    assert warnings.filters == filters and warnings.showwarning is show


@pytest.mark.slow  # three lazy tables of 1.2e6 points on dask's threads: ~9 s
@pytest.mark.filterwarnings("error::matprops.errors.ValidityWarning")
def test_warnings_from_other_threads_arrive_while_lazy_tables_are_computed():
    # four callers, each in its own thread, while dask's threads compute lazy tables
    si = matprops.silicon()
    _warm(si)
    stop, failures = threading.Event(), []
    rounds = []

    def lazy():
        try:
            for _ in range(3):
                data = si.table(
                    ["intrinsic_density", "band_gap"],
                    T=np.linspace(250.0, 450.0, 1_200_000),
                    chunks=300_000,
                )
                with dask.config.set(scheduler="threads", num_workers=4):
                    data.compute()
                rounds.append(1)
        except BaseException as exc:
            failures.append(exc)
        finally:
            stop.set()

    calls, warned = [0] * 4, [0] * 4

    def caller(index):
        while not stop.is_set():
            calls[index] += 1
            try:
                si.intrinsic_density(30.0)  # below couderc-2014's 77 K
            except matprops.ValidityWarning:
                warned[index] += 1

    threads = [threading.Thread(target=caller, args=(i,)) for i in range(4)]
    threads.append(threading.Thread(target=lazy))
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join()
    assert not failures, failures
    assert len(rounds) == 3 and sum(calls) > 100
    assert warned == calls


def test_large_table_and_lazy_table_leave_the_filters_as_they_were(si):
    _warm(si)
    filters = list(warnings.filters)
    with pytest.warns(matprops.ValidityWarning):  # crosses 600 K
        si.table(["band_gap"], T=np.linspace(200.0, 800.0, 300_000))
    with pytest.warns(matprops.ValidityWarning):
        si.table(["band_gap"], T=np.linspace(200.0, 800.0, 600_000), chunks=300_000).compute()
    assert warnings.filters == filters


def test_large_table_warns_once_for_its_grid(si):
    with pytest.warns(matprops.ValidityWarning) as caught:
        si.table(["band_gap"], T=np.linspace(200.0, 800.0, 300_000))
    assert len(caught) == 1 and "200-800 K" in str(caught[0].message)


def test_the_library_never_touches_the_warning_filters():
    # catch_warnings and the filters are process-wide: a library that sets them hides
    # another thread's warnings (silencing goes through a material's checked view)
    import ast
    from pathlib import Path

    package = Path(matprops.__file__).parent
    touching = {"simplefilter", "filterwarnings", "catch_warnings", "resetwarnings"}
    found = [
        f"{path.relative_to(package)}:{node.lineno}"
        for path in sorted(package.rglob("*.py"))
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8")))
        if isinstance(node, ast.Attribute) and node.attr in touching
    ]
    assert found == []
