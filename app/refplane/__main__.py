"""Allow ``python -m refplane``."""

import sys

from refplane.cli import main

# Guarded: `refplane check` starts worker processes that import the parent's main module,
# and they must not run the command line again.
if __name__ == "__main__":
    sys.exit(main())
