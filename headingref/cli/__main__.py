"""``python -m headingref.cli``: the same as the ``headingref`` console script."""

import sys

from . import main

sys.exit(main())
