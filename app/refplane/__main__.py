"""Allow ``python -m refplane``."""

import sys

from refplane.cli import main

sys.exit(main())
