"""``python -m panelflow``: the same as the ``panelflow`` command."""

import sys

from .cli import main

sys.exit(main())
