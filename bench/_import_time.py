"""How long ``import inkreach`` takes in a fresh interpreter, against bare start-up and numpy."""

import os
import statistics
import subprocess
import sys

from _report import table

__all__ = ["section_import", "import_times"]

_SRC = os.path.join(os.path.dirname(os.path.dirname(os.path.abspath(__file__))), "src")


def _run(code, runs):
    env = dict(os.environ, PYTHONPATH=_SRC)
    times = []
    for _ in range(runs):
        out = subprocess.run(
            [sys.executable, "-c",
             f"import time; t = time.perf_counter(); {code}; print(time.perf_counter() - t)"],
            capture_output=True, text=True, env=env, check=True)
        times.append(float(out.stdout.strip()))
    return statistics.median(times)


def import_times(runs=5):
    """Median seconds of ``import inkreach`` and of ``import numpy``, each in a new process."""
    return _run("import inkreach", runs), _run("import numpy", runs)


def section_import(cfg, results):
    own, ref = import_times(max(3, cfg.get("runs", 3)))
    results["import"] = (own, ref)
    return table(["what", "seconds (median, fresh interpreter)"],
                 [["import inkreach", f"{own:.4f}"], ["import numpy (reference)", f"{ref:.4f}"],
                  ["ratio", f"{own / ref:.3f}"]])
