"""``python -m lotwise``: the same as the ``lotwise`` command."""

from lotwise.cli import main

main()
