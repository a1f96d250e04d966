"""``python -m ridesim``: the same program as the ``ridesim`` command."""

import sys

from ridesim.cli import main

if __name__ == "__main__":
    sys.exit(main())
