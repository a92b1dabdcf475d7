"""The ``matprops`` command: argument parsing and printing (see :mod:`.main`)."""

from .main import main, parse_grid

__all__ = ["main", "parse_grid"]
