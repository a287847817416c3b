"""``python -m elimscan``: the same as the ``elimscan`` command."""

import sys

from elimscan.cli import main

sys.exit(main())
