"""Timing of repeated calls, shared by the benchmark scripts.

The scripts are run as ``python benchmarks/bench_x.py``, which puts this folder first on
``sys.path``, so they import it as ``from timing import best_of, time_calls``.
"""

from __future__ import annotations

import statistics
import time
from dataclasses import dataclass


@dataclass(frozen=True)
class Timing:
    """Wall times of ``repeat`` calls of one function: the best, the median, and the last result."""

    best: float
    median: float
    result: object


def time_calls(fn, repeat: int) -> Timing:
    """Call ``fn()`` ``repeat`` times and time each call (``time.perf_counter``)."""
    times, result = [], None
    for _ in range(repeat):
        start = time.perf_counter()
        result = fn()
        times.append(time.perf_counter() - start)
    return Timing(min(times), statistics.median(times), result)


def best_of(fn, repeat: int = 5) -> float:
    """The shortest of ``repeat`` timed calls of ``fn()``, in seconds: the least disturbed by the
    machine's other work."""
    return time_calls(fn, repeat).best
