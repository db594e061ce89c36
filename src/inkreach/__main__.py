"""``python -m inkreach`` runs the command line."""

from inkreach.cli import main

raise SystemExit(main())
