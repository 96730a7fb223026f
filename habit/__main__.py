"""Allow ``python -m habit``."""

from habit.cli import main

main()
