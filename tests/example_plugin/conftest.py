"""Make ``harbourlight_rules`` importable from this source tree when it is not installed.

The package's tests run both here (``pytest`` inside this directory) and as part
of burnproof's own suite; burnproof itself must be importable either way.
"""

import importlib.util
import sys
from pathlib import Path

if importlib.util.find_spec("harbourlight_rules") is None:
    sys.path.insert(0, str(Path(__file__).resolve().parent))
