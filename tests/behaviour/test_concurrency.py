"""Thread safety: the netCDF/HDF5 library is not thread-safe, so tables are read
once under one lock and kept immutable. A crash here kills the interpreter, so the
threads run in a subprocess and the test reads its exit status."""

import subprocess
import sys
import textwrap

import numpy as np
import pytest

# Each round builds a fresh (cold) catalogue and sends 16 threads, released together by
# a barrier, at its first optical call; round 0 also pays the cold imports (netCDF4).
COLD_THREADS = textwrap.dedent("""
    import sys, threading, warnings
    import matprops
    from matprops.catalogue.store import Catalogue, datasets_root

    rounds, count = int(sys.argv[1]), 16
    root = datasets_root()
    calls = [
        lambda si: si.absorption(800.0, 300.0).m_as("1/cm"),
        lambda si: si.refractive_index(1000.0, 350.0).m_as(""),
        lambda si: si.kernel("absorption")(wavelength=900.0, temperature=320.0),
        lambda si: float(si.model("refractive_index").to_dataset()["refractive_index"][0]),
    ]
    for number in range(rounds):
        si = matprops.silicon() if number == 0 else matprops.Silicon(catalogue=Catalogue(root))
        barrier = threading.Barrier(count)
        results, failures = [None] * count, []

        def work(index):
            barrier.wait()
            try:
                with warnings.catch_warnings():
                    warnings.simplefilter("ignore")
                    results[index] = float(calls[index % len(calls)](si))
            except BaseException as exc:
                failures.append(repr(exc))

        threads = [threading.Thread(target=work, args=(i,)) for i in range(count)]
        for thread in threads:
            thread.start()
        for thread in threads:
            thread.join()
        if failures:
            sys.exit(f"round {number}: {failures[0]}")
        for kind in range(len(calls)):  # every thread of a kind got the same number
            assert len(set(results[kind::len(calls)])) == 1, results
    print("rounds", rounds)
""")


@pytest.mark.parametrize("process", range(2))
def test_sixteen_cold_threads_first_optical_call(process):
    # 2 processes x 16 rounds x 16 threads; unlocked, 9 of 10 such processes died
    # (segmentation fault, bus error) or returned wrong results before the fix
    run = subprocess.run(
        [sys.executable, "-c", COLD_THREADS, "16"],
        capture_output=True,
        text=True,
        timeout=120,
        check=False,
    )
    assert run.returncode == 0, f"exit {run.returncode}: {run.stderr[-2000:]}"
    assert run.stdout.strip() == "rounds 16"


def test_loaded_tables_are_immutable(si):
    si.absorption(800.0, 300.0)  # loads the tables
    kernel = si.kernel("absorption")
    table = kernel.function._function  # the prepared table (see kernels/_tables.py)
    arrays = [a for a in table.arrays if isinstance(a, np.ndarray)]
    table(np.array([800.0, 900.0]), 300.0)  # the cached row at one temperature, too
    arrays += list(table._rows.values())
    assert arrays and all(not a.flags.writeable for a in arrays)
    with pytest.raises(ValueError, match="read-only"):
        arrays[0][0] = 0.0
