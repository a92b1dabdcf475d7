"""Helpers that the spawned worker processes of the tests import (by module name)."""


def plain_pickling():
    """Pool initializer: pickle exceptions as a Python without dask would.

    pint imports dask when it is installed, and dask registers tblib's reducers for
    every exception class then defined, which hides an exception that cannot be
    rebuilt from its pickle. matprops depends on neither, so the workers drop them.
    """
    import copyreg

    import matprops.units  # noqa: F401  (pint, and through it maybe dask, load here)

    for cls in list(copyreg.dispatch_table):
        if isinstance(cls, type) and issubclass(cls, BaseException):
            del copyreg.dispatch_table[cls]
