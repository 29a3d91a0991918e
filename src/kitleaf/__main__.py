"""``python -m kitleaf`` runs the command line."""

import sys

from kitleaf.cli import main

sys.exit(main())
