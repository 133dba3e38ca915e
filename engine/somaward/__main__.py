"""``python -m somaward``: the ``somaward`` command (:mod:`somaward.cli`).

Guarded, so that importing this module (pytest's doctest collection, an IDE) runs nothing.
"""

import sys

from .cli import main

if __name__ == "__main__":
    sys.exit(main())
