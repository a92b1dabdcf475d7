"""Files read and written safely: sizes checked before reading, paths confined to their
folder, writes through temporaries that an interrupted application removes.

Reading (the catalogue's data files):

- :func:`read_limited` checks, before reading a byte, that the path is a regular file
  no larger than the limit of its kind (:data:`LIMITS`), and reads at most that much
  (a file that grows while it is read is refused too);
- :func:`confined` refuses a path that leaves its folder (``..``, an absolute part, a
  symbolic link pointing elsewhere).

Writing (exports, plots, the checksum list, references):

- :func:`temporary_for` names a temporary beside the target and records it while it
  exists; :func:`forget` drops it once it was moved into place or removed;
- :func:`interruptible` is for *applications* (the ``matprops`` command and the
  ``python -m`` tools): while it is active, SIGINT and SIGTERM remove every recorded
  temporary (and a file of an unfinished set, such as a CSV whose provenance file was
  not yet written) and exit at once with status 130 or 143. It never raises into the
  writing code, which may be inside the netCDF library holding a lock (an exception
  there could deadlock the interpreter). A library never installs signal handlers:
  without them, Ctrl-C is a KeyboardInterrupt and the writers' ``finally`` clauses
  remove their temporaries.
"""

from __future__ import annotations

import contextlib
import itertools
import os
import signal
import stat
import threading
from pathlib import Path

from ..errors import DatasetError

__all__ = [
    "LIMITS",
    "confined",
    "forget",
    "interruptible",
    "pending",
    "read_limited",
    "temporary_for",
]

MiB = 1 << 20
#: Largest file of each kind that is read (bytes). The largest committed files are well
#: below: model files ~10 kB, a release reference ~2 MB, the largest table ~1.3 MB.
LIMITS = {
    ".toml": 1 * MiB,
    ".json": 64 * MiB,
    ".nc": 256 * MiB,
    ".sha256": 4 * MiB,
}
_DEFAULT_LIMIT = 64 * MiB


def read_limited(path: Path, limit: int | None = None) -> bytes:
    """The bytes of a regular file of at most ``limit`` bytes (default: its kind's,
    :data:`LIMITS`); a DatasetError, before anything is read, for anything else."""
    path = Path(path)
    limit = limit or LIMITS.get(path.suffix, _DEFAULT_LIMIT)
    try:
        status = os.stat(path)  # (follows a symbolic link: the file it names)
    except OSError as exc:
        raise DatasetError(path, f"cannot be read ({exc.strerror or exc})") from exc
    if not stat.S_ISREG(status.st_mode):
        raise DatasetError(path, "is not a regular file (a folder, device or pipe); not read")
    if status.st_size > limit:
        raise DatasetError(
            path,
            f"is {status.st_size} bytes, above the {limit} bytes a {path.suffix or 'data'} "
            "file may have; refusing to read it",
        )
    try:
        with open(path, "rb") as handle:
            data = handle.read(limit + 1)
    except OSError as exc:
        raise DatasetError(path, f"cannot be read ({exc.strerror or exc})") from exc
    if len(data) > limit:
        raise DatasetError(path, f"grew above {limit} bytes while it was read; not read")
    return data


def confined(path: Path, folder: Path, what: str = "the datasets folder") -> Path:
    """``path`` if it lies inside ``folder`` once ``..`` and symbolic links are
    resolved; a DatasetError naming both otherwise."""
    path, folder = Path(path), Path(folder)
    try:
        inside = path.resolve().is_relative_to(folder.resolve())
    except (OSError, RuntimeError) as exc:  # a symbolic-link loop
        raise DatasetError(path, f"cannot be resolved ({exc})") from exc
    if not inside:
        raise DatasetError(
            path,
            f"lies outside {what} ({folder}), through '..', an absolute path or a "
            "symbolic link; refusing to read it",
        )
    return path


# --------------------------------------------------------------------------- writing

# temporaries (and files of an unfinished set) in this process -> the file being written
_PENDING: dict[Path, Path] = {}
_COUNTER = itertools.count()


def temporary_for(path: Path) -> Path:
    """A temporary name beside ``path`` (hidden, unique in this process), recorded until
    :func:`forget` so that an interrupted application removes it."""
    path = Path(path)
    tmp = path.with_name(f".{path.name}.tmp-{os.getpid()}-{next(_COUNTER)}")
    _PENDING[tmp] = path
    return tmp


def pending(path: Path) -> None:
    """Record a finished file of a set not yet complete (removed on interruption)."""
    _PENDING[Path(path)] = Path(path)


def forget(*paths: Path) -> None:
    for path in paths:
        _PENDING.pop(Path(path), None)


def _remove_pending() -> list[Path]:
    """Remove every recorded temporary; return the files that were being written."""
    targets = []
    for path, target in list(_PENDING.items()):
        try:
            os.unlink(path)
        except OSError:
            pass
        _PENDING.pop(path, None)
        if target not in targets:
            targets.append(target)
    return targets


_EXIT = {signal.SIGINT: 130, signal.SIGTERM: 143}


@contextlib.contextmanager
def interruptible(program: str = "matprops"):
    """For an application's main function: SIGINT and SIGTERM during a write remove its
    temporaries and exit at once (130, 143); outside a write, SIGINT is the usual
    KeyboardInterrupt and SIGTERM ends the process at once (143). Does nothing outside the main
    thread (only it may set signal handlers)."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return

    def handler(signum, frame):
        if _PENDING:
            names = ", ".join(str(p) for p in _remove_pending())
            message = f"{program}: interrupted: {names} not written (its temporary removed)\n"
            os.write(2, message.encode("utf-8", "replace"))
            os._exit(_EXIT[signum])
        if signum == signal.SIGINT:
            raise KeyboardInterrupt  # (the application says "interrupted" and stops)
        os._exit(_EXIT[signum])  # SIGTERM: stop now, there is nothing to clean up

    previous = {}
    try:
        for number in _EXIT:
            if signal.getsignal(number) is signal.SIG_IGN:
                continue  # ignored by whoever started us (nohup, a background job): kept
            previous[number] = signal.signal(number, handler)
        yield
    finally:
        for number, old in previous.items():
            signal.signal(number, old)
