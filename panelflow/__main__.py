"""``python -m panelflow``: the same as the ``panelflow`` command."""

import sys

from panelflow.cli import main

sys.exit(main())
