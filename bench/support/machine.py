"""What machine a benchmark ran on, printed beside every figure."""

from __future__ import annotations

import os
import platform
from pathlib import Path


def cpu_model() -> str:
    """The CPU's model name from /proc/cpuinfo, or what the platform module knows."""
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                return line.split(":", 1)[1].strip()
    except OSError:
        pass
    return platform.processor() or "unknown"


def describe() -> str:
    """One line: host, CPU, core count, Python and load average."""
    try:
        one, five, fifteen = os.getloadavg()
        load = f"load {one:.1f}/{five:.1f}/{fifteen:.1f}"
    except OSError:
        load = "load unknown"
    return (
        f"{platform.node()} · {cpu_model()} · {os.cpu_count()} cores · "
        f"Python {platform.python_version()} · {load}"
    )
