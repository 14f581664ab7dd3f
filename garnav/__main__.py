"""``python -m garnav`` runs the command line."""

import sys

from garnav.cli import main

sys.exit(main())
