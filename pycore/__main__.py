"""``python -m pycore``: see pycore.cli."""

import sys

from .cli import main

sys.exit(main())
