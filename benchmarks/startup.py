"""Start-up time of the command line, against the floor of a bare Python + click start.

Runs each command line in a fresh process many times, interleaved, and reports medians
and the ratio to the floor measured in the same run. Usage: python benchmarks/startup.py
"""

from __future__ import annotations

import statistics
import subprocess
import sys
import time

REPEATS = 15
FLOOR = [sys.executable, "-c", "import click"]


def main() -> None:
    from habit.cli import COMMANDS

    cases = {"floor: python -c 'import click'": FLOOR}
    cases["habit --help"] = [sys.executable, "-m", "habit", "--help"]
    for name in sorted(COMMANDS):
        cases[f"habit {name} --help"] = [sys.executable, "-m", "habit", name, "--help"]
    times: dict[str, list[float]] = {k: [] for k in cases}
    for _ in range(REPEATS):
        for label, argv in cases.items():
            start = time.perf_counter()
            subprocess.run(argv, check=True, capture_output=True)
            times[label].append(time.perf_counter() - start)
    floor = statistics.median(times["floor: python -c 'import click'"])
    print(f"{'command':<32}{'median (ms)':>12}{'ratio to floor':>16}")
    for label, values in times.items():
        med = statistics.median(values)
        print(f"{label:<32}{med * 1e3:>12.1f}{med / floor:>16.2f}")


if __name__ == "__main__":
    main()
