"""Allow ``python -m habit``."""

from habit.cli import main

if __name__ == "__main__":
    main()
