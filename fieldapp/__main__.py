"""``python -m fieldapp`` runs the plumebook command."""

import sys

from fieldapp.cli import main

sys.exit(main())
