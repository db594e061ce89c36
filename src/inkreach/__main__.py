"""``python -m inkreach`` runs the command line."""

import signal
import sys

try:
    from inkreach.cli import main
except KeyboardInterrupt:  # Ctrl-C while starting: stop quietly
    sys.exit(130)

try:
    _code = main()
except KeyboardInterrupt:  # between the command's end and here
    _code = 130
# the work is done and reported: a late Ctrl-C must not kill the
# interpreter while it shuts down (that exits with no message)
signal.signal(signal.SIGINT, signal.SIG_IGN)
raise SystemExit(_code)
