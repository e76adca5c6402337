"""``python -m pycore``: see pycore.interfaces.cli."""

import sys

from pycore.interfaces.cli import main

sys.exit(main())
