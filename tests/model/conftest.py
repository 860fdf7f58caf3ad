"""Shared set-up for the model tests: import paths.

The tests import the project's package ``model`` (public names only) and the independent
mpmath reference ``reference.py`` beside them, plus ``closed_forms.py`` and ``helpers.py``.
"""

import pathlib
import sys

_HERE = pathlib.Path(__file__).resolve().parent
_ROOT = _HERE.parents[1]
for p in (str(_HERE), str(_ROOT)):
    if p not in sys.path:
        sys.path.insert(0, p)
