"""Allow ``python -m redcorr``."""

import sys

from redcorr.cli import main

sys.exit(main())
