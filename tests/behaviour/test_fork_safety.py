"""Fork safety: a process forked while another thread loads tables.

A forked child has only the thread that forked: a lock another thread held at the fork
stays held forever in the child, and a child that needs it waits forever. matprops
takes its table lock before a fork (no thread is then inside the netCDF library, which
is not fork-safe half-way through a read) and makes every lock of the catalogue anew in
the child (``os.register_at_fork``). Before: 7 of ~22 fork pools started while another
thread held the table lock hung (measured again here: 12 of 20). The pools run in a
subprocess, so a hang fails the test by its timeout instead of hanging the run.
"""

import subprocess
import sys
import textwrap

import pytest

SCRIPT = textwrap.dedent("""
    import multiprocessing, sys, threading
    import matprops
    from matprops.catalogue.store import Catalogue, datasets_root

    rounds = int(sys.argv[1])
    root = datasets_root()
    shared = matprops.Silicon(catalogue=Catalogue(root))  # cold: loads on first use
    stop = threading.Event()

    def loader():  # holds the table lock again and again: cold catalogues read tables
        while not stop.is_set():
            si = matprops.Silicon(catalogue=Catalogue(root))
            si.absorption(800.0, 300.0)
            si.refractive_index(1000.0, 350.0)

    def work(index):
        si = shared if index % 2 else matprops.Silicon(catalogue=Catalogue(root))
        return float(si.absorption(800.0, 300.0).m_as("1/cm"))

    fresh = matprops.Silicon(catalogue=Catalogue(root))
    expected = float(fresh.absorption(800.0, 300.0).m_as("1/cm"))
    threads = [threading.Thread(target=loader) for _ in range(2)]
    threads.append(threading.Thread(target=lambda: shared.absorption(900.0, 320.0)))
    for thread in threads:
        thread.start()
    context = multiprocessing.get_context("fork")
    hung = 0
    for number in range(rounds):
        pool = context.Pool(2)
        try:
            results = pool.map_async(work, range(4)).get(timeout=15)
            assert results == [expected] * 4, results
        except multiprocessing.TimeoutError:
            hung += 1
        finally:
            pool.terminate()
            pool.join()
    stop.set()
    for thread in threads:
        thread.join()
    print("hung", hung, "of", rounds)
    sys.exit(1 if hung else 0)
""")


@pytest.mark.slow  # ten fork pools beside two loading threads: ~10 s
@pytest.mark.skipif(sys.platform == "win32", reason="fork is POSIX only")
def test_fork_pools_started_while_threads_load_tables_do_not_hang():
    run = subprocess.run(
        [sys.executable, "-c", SCRIPT, "10"],
        capture_output=True,
        text=True,
        timeout=240,
        check=False,
    )
    assert run.returncode == 0, f"{run.stdout.strip()} {run.stderr[-2000:]}"
    assert run.stdout.strip() == "hung 0 of 10"


def test_a_forked_child_gets_fresh_catalogue_locks():
    # deterministic: a thread holds the table lock (and a catalogue's) while the
    # process forks; the child must still read a table
    script = textwrap.dedent("""
        import os, threading, time
        import matprops
        from matprops.catalogue import store
        from matprops.catalogue.store import Catalogue, datasets_root

        catalogue = Catalogue(datasets_root())
        held, release = threading.Event(), threading.Event()

        def holder():
            with catalogue._lock:
                held.set()
                release.wait()

        thread = threading.Thread(target=holder)
        thread.start()
        held.wait()
        pid = os.fork()
        if pid == 0:  # the child: the holder thread does not exist here
            si = matprops.Silicon(catalogue=catalogue)
            value = si.absorption(800.0, 300.0).m_as("1/cm")
            os._exit(0 if value > 0 else 3)
        release.set()
        thread.join()
        for _ in range(300):  # 30 s at most, then the child is killed (a hang)
            done, status = os.waitpid(pid, os.WNOHANG)
            if done:
                print("child", os.waitstatus_to_exitcode(status))
                break
            time.sleep(0.1)
        else:
            os.kill(pid, 9)
            os.waitpid(pid, 0)
            print("child hung")
    """)
    run = subprocess.run(
        [sys.executable, "-c", script], capture_output=True, text=True, timeout=60, check=False
    )
    assert run.stdout.strip() == "child 0", run.stderr[-2000:]
