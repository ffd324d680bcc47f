"""Test-suite set-up: the helper modules beside the tests (seeded data
generators) import by name whichever files pytest is asked to run."""

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
