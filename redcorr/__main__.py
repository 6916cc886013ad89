"""Allow ``python -m redcorr``; Ctrl-C while the command line loads ends quietly (status 130)."""

import sys

try:
    from redcorr.cli import console
except KeyboardInterrupt:
    print("redcorr: interrupted", file=sys.stderr)
    sys.exit(130)

console()
