"""``python -m phasekit.cli``: the ``phasekit`` command."""

import sys

from phasekit.cli.main import main

sys.exit(main())
