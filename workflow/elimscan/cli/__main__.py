"""``python -m elimscan.cli``: the same as the ``elimscan`` command (and ``python -m elimscan``)."""

import sys

from elimscan.cli.parser import main

sys.exit(main())
