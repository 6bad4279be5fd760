"""``python -m fluxfront.cli``: the same as the ``fluxfront`` command."""
import sys

from .main import main

sys.exit(main())
