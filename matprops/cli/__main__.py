"""``python -m matprops.cli`` runs the ``matprops`` command."""

from .main import main

raise SystemExit(main())
