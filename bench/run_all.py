"""Run every benchmark in bench/ one after another and print what each reports.

Benchmarks are never tests: they print figures (and the machine) for README's Performance
section. Some need the local PostgreSQL server (127.0.0.1:5432) or Redis; each says so.
Usage: python bench/run_all.py [name ...]   (names like physics, import, api)
"""

from __future__ import annotations

import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
ORDER = ["physics", "import", "impedance", "quality", "search", "api", "refit", "load_test"]


def scripts(names: list[str]) -> list[Path]:
    found = {p.stem.removeprefix("bench_"): p for p in HERE.glob("*.py") if p.name != "run_all.py"}
    wanted = names or [n for n in ORDER if n in found] + sorted(set(found) - set(ORDER))
    missing = [n for n in wanted if n not in found]
    if missing:
        sys.exit(f"no benchmark named {', '.join(missing)}; have {', '.join(sorted(found))}")
    return [found[n] for n in wanted]


def main() -> int:
    failed = []
    for script in scripts(sys.argv[1:]):
        print(f"\n===== {script.name} =====", flush=True)
        t0 = time.perf_counter()
        rc = subprocess.call([sys.executable, str(script)], cwd=HERE.parent)
        print(f"----- {script.name}: exit {rc}, {time.perf_counter() - t0:.0f} s", flush=True)
        if rc:
            failed.append(script.name)
    if failed:
        print(f"\nbenchmarks that failed: {', '.join(failed)}")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
