"""``python -m mapper`` runs the ``netfit`` command."""
import sys

from .cli import main

sys.exit(main())
