"""``python -m checker.cli``: the same as the ``studygap`` command."""

import sys

from .main import main

sys.exit(main())
