"""Timing shared by the benchmarks: a reference and a candidate run in turn in the same run."""

from __future__ import annotations

import time


def paired(reference, candidate, repeats: int) -> tuple[float, float]:
    """Run reference and candidate alternately; the shortest time of each (as ``timeit`` advises).

    Alternating makes both see the same machine load, so their ratio means the same on a busy
    or an idle machine.
    """
    ref_times, cand_times = [], []
    for _ in range(repeats):
        start = time.perf_counter()
        reference()
        middle = time.perf_counter()
        candidate()
        end = time.perf_counter()
        ref_times.append(middle - start)
        cand_times.append(end - middle)
    return min(ref_times), min(cand_times)
