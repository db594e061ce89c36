"""``python -m inkreach`` runs the command line."""

import sys

try:
    from inkreach.cli import main
except KeyboardInterrupt:  # Ctrl-C while starting: stop quietly
    sys.exit(130)

raise SystemExit(main())
