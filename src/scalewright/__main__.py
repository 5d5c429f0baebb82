"""``python -m scalewright``: the same as the ``scalewright`` command."""

from .cli import main

if __name__ == "__main__":
    raise SystemExit(main())
