"""``python -m compiler`` is the same program as ``boresmith``."""

import sys

from compiler.cli import main

sys.exit(main())
