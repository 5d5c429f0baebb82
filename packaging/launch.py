"""The bundle's entry point: the same ``scalewright`` command as ``pip install`` gives."""

import sys

from scalewright.cli import main

if __name__ == "__main__":
    sys.exit(main())
