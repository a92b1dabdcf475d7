"""The errors and warnings matprops raises.

Every error subclasses :class:`Error` and also the built-in it resembles, so
``except ValueError`` keeps working for callers that do not know matprops.
Messages name the argument or file, the expected units or field, and the value
received, and say what exists when a name is unknown.
"""

from __future__ import annotations

import difflib
import os
import pickle
import sys
import warnings
from types import FrameType

__all__ = [
    "ChecksumError",
    "DatasetError",
    "Error",
    "FinalityError",
    "InputError",
    "ReleaseFrozenError",
    "SkippedModelWarning",
    "SolverError",
    "UnitError",
    "UnknownDefectError",
    "UnknownModelError",
    "UnknownNameError",
    "UnknownQuantityError",
    "UnknownReleaseError",
    "UnknownVariantError",
    "ValidityError",
    "ValidityWarning",
]


def _rebuild(cls, args, state):
    """Unpickle an error without calling its ``__init__`` (see :meth:`Error.__reduce__`)."""
    error = cls.__new__(cls, *args)
    error.args = args
    error.__dict__.update(state)
    return error


def _picklable(value):
    try:
        pickle.dumps(value)
    except (pickle.PicklingError, TypeError, AttributeError, ValueError, RecursionError):
        # a generator, a lock, a local object of the caller's ...
        return repr(value)
    return value


class Error(Exception):
    """Base class of every matprops error.

    Errors pickle with their message and fields (argument, received value, path ...),
    so a process pool or a dask worker hands the real error back to its parent. A
    field whose value cannot be pickled crosses as its ``repr``.
    """

    def __reduce__(self):
        # Exception's own reduce re-calls __init__ with the message alone, which our
        # subclasses' signatures refuse: the parent of a process pool then hangs.
        state = {key: _picklable(value) for key, value in self.__dict__.items()}
        return _rebuild, (type(self), self.args, state)


class UnitError(Error, TypeError):
    """An argument has the wrong physical dimension or an unparseable unit."""

    def __init__(
        self,
        argument: str,
        expected: str,
        received,
        plain: str | None = None,
        description: str | None = None,
    ):
        self.argument, self.expected, self.received = argument, expected, received
        shown = description if description is not None else repr(received)
        super().__init__(
            f"argument {argument!r} expects a quantity in {expected} "
            f"(or a plain number in {plain or expected}); received {shown}"
        )


class InputError(Error, ValueError):
    """An argument has the right units but an unphysical value (T <= 0, NaN, ...)."""

    def __init__(self, argument: str, requirement: str, received):
        self.argument, self.requirement, self.received = argument, requirement, received
        super().__init__(f"argument {argument!r} must be {requirement}; received {received}")


class UnknownNameError(Error, KeyError):
    """A name (model, quantity, release) that does not exist; lists what does."""

    kind = "name"

    def __init__(self, name: str, known, context: str = ""):
        self.name, self.known = name, sorted(known)
        close = difflib.get_close_matches(str(name), self.known, n=1)
        hint = f" Did you mean {close[0]!r}?" if close else ""
        where = f" {context}" if context else ""
        self.message = (
            f"unknown {self.kind} {name!r}{where}; known: "
            f"{', '.join(self.known) or '(none)'}.{hint}"
        )
        super().__init__(self.message)

    def __str__(self) -> str:  # KeyError would print the repr of the message
        return self.message


class UnknownModelError(UnknownNameError):
    kind = "model"


class UnknownQuantityError(UnknownNameError):
    kind = "quantity"


class UnknownReleaseError(UnknownNameError):
    kind = "release"


class UnknownDefectError(UnknownNameError):
    """A defect name that is not in the defect catalogue (``datasets/defects/``)."""

    kind = "defect"


class UnknownVariantError(UnknownNameError):
    """A dopant species or carrier for which a model has no coefficient set."""

    kind = "dopant species or carrier"


class DatasetError(Error, ValueError):
    """A file in ``datasets/`` is missing a field, has a bad unit, or cannot be read."""

    def __init__(self, path, problem: str):
        self.path, self.problem = str(path), problem
        super().__init__(f"{path}: {problem}")


class ChecksumError(DatasetError):
    """A dataset file does not match the checksum recorded for it: it is not loaded."""


class FinalityError(DatasetError):
    """A final release whose files do not match the seal recorded in the package code
    (or a release file that claims or denies finality against that record): it is not
    loaded."""


class ReleaseFrozenError(Error, RuntimeError):
    """An attempt to change the reference numbers of a final release."""


class SolverError(Error, ArithmeticError):
    """A numerical solve (e.g. charge neutrality) did not converge; names the points."""

    # set by solvers that know them: the first failing points (flat indices into the
    # input's shape, or dicts naming each point's index and inputs), how many failed,
    # and why; the block-wise solvers also set what was solved (``subject``) and what
    # went wrong (``what``), to name the points again in the caller's whole input
    points: list
    count: int
    reason: str
    subject: str
    what: str


class ValidityError(Error, ValueError):
    """An input outside a model's validity range, with ``strict=True``."""


class SkippedModelWarning(UserWarning):
    """A comparison left a model out (or out at some points): it does not cover a
    carrier or dopant species asked for."""


class ValidityWarning(UserWarning):
    """An input outside a model's validity range; the value is still returned.

    (It takes only a message, so it pickles as every warning does.)
    """


class Unusable:
    """Stands for an object that could not be rebuilt in this process: a material, a
    model, a kernel or a release unpickled where the data differ from those it was
    pickled with (or cannot be read). Every use raises the error that prevented it.

    An exception raised *while unpickling* never reaches the sender: a process pool's
    worker dies with the task (the pool waits for it forever) and a dask client hangs.
    So unpickling never raises; the error waits for the first use, an ordinary call
    whose exception a pool or a dask worker sends back to the client. Methods of the
    object stood for are returned as functions that raise (``getattr(material,
    "band_gap")`` is how a bound method unpickles); other attributes raise at once.
    """

    def __init__(self, error: BaseException, stands_for: type):
        self.error, self.stands_for = error, stands_for

    def _raise(self, *args, **kwargs):
        raise self.error.with_traceback(None)

    def __call__(self, *args, **kwargs):
        self._raise()

    def __getattr__(self, name):
        if name.startswith("__") or name in ("error", "stands_for"):
            raise AttributeError(name)
        if callable(getattr(self.stands_for, name, None)):
            return self._raise
        self._raise()

    def __reduce__(self):
        return Unusable, (self.error, self.stands_for)

    def __repr__(self) -> str:
        return f"<unusable {self.stands_for.__name__}: {self.error}>"


_PACKAGE_DIR = os.path.dirname(os.path.abspath(__file__))


def warn(message: str, category=ValidityWarning) -> None:
    """Issue a warning attributed to the first caller outside matprops."""
    frame: FrameType | None = sys._getframe(0)
    level = 1
    while frame is not None and frame.f_code.co_filename.startswith(_PACKAGE_DIR):
        frame, level = frame.f_back, level + 1
    warnings.warn(message, category, stacklevel=level)
