"""Shared test set-up: make ``tests/reference`` importable as ``reference``."""

import sys
from pathlib import Path

_TESTS = str(Path(__file__).resolve().parent)
if _TESTS not in sys.path:
    sys.path.insert(0, _TESTS)
