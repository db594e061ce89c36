"""Writing bench/RESULTS.md: cells, Markdown tables, fitted exponents, the machine's facts."""

import datetime
import os
import platform

import numpy as np

__all__ = ["na", "fmt", "table", "exponent", "machine_facts"]


def na(exc):
    msg = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
    return f"not available: {type(exc).__name__}: {msg}"[:200]


def fmt(v, nd=3):
    if v is None:
        return "—"
    if isinstance(v, str):
        return v
    if isinstance(v, (int, np.integer)):
        return f"{int(v):,}"
    if not np.isfinite(v):
        return "—"
    if abs(v) >= 100:
        return f"{v:,.0f}"
    return f"{v:.{nd}f}"


def table(header, rows):
    out = ["| " + " | ".join(header) + " |", "|" + "|".join("---" for _ in header) + "|"]
    for r in rows:
        out.append("| " + " | ".join(fmt(c) for c in r) + " |")
    return "\n".join(out)


def exponent(x, y):
    """Slope of log y against log x by least squares (np.polyfit)."""
    x, y = np.asarray(x, float), np.asarray(y, float)
    ok = (x > 0) & (y > 0) & np.isfinite(x) & np.isfinite(y)
    if ok.sum() < 2 or np.ptp(np.log(x[ok])) == 0:
        return float("nan")
    return float(np.polyfit(np.log(x[ok]), np.log(y[ok]), 1)[0])


def machine_facts():
    import cv2
    import scipy
    import skimage

    return "\n".join([
        f"- Date: {datetime.datetime.now().strftime('%Y-%m-%d %H:%M')}",
        f"- Machine: {platform.machine()}, {os.cpu_count()} CPUs, {platform.system()} "
        f"{platform.release()}",
        f"- Python {platform.python_version()}, numpy {np.__version__}, "
        f"OpenCV {cv2.__version__}, scikit-image {skimage.__version__}, scipy {scipy.__version__}",
        f"- Load average at the start (1, 5, 15 min): "
        + (", ".join(f"{v:.2f}" for v in os.getloadavg()) if hasattr(os, "getloadavg")
           else "unknown")
        + " — other work on the machine slows absolute figures; ratios to the reference "
          "workload are measured side by side and suffer less.",
    ])
