"""What every bench process shares, kept light: the launch process imports it, and anything it
imports would be counted in the interface's start-up."""

from __future__ import annotations

import resource
from pathlib import Path

ADMIN, SUPERVISOR, FIRST_NURSE, CLERK = "admin", "super-1", "nurse-001", "clerk-01"


def peak_mb() -> float:
    """This process's peak resident memory. Linux's ru_maxrss keeps the peak of the parent that
    forked it, so the kernel's high-water mark of this program's own memory is read first."""
    status = Path("/proc/self/status")
    if status.exists():
        for line in status.read_text().splitlines():
            if line.startswith("VmHWM:"):
                return round(int(line.split()[1]) / 1024, 1)  # kB
    return round(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024, 1)  # KiB on Linux


def children_peak_mb() -> float:
    """The largest peak resident memory of this process's finished children (the refresh's compute
    processes), 0 when it had none."""
    return round(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024, 1)  # KiB on Linux
