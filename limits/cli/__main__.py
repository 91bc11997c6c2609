"""``python -m legbridge.limits.cli``: the legbridge command line."""

import sys

from .entry import main

sys.exit(main())
