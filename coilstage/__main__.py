"""``python -m coilstage``."""

from coilstage.cli import main

raise SystemExit(main())
