"""Peak memory of one end-to-end plan, run as its own process.

``python bench/_memory.py PICTURE STYLE`` prints one JSON line:
``baseline_mb`` (the interpreter with every stage imported) and ``peak_mb``
(the largest resident set during planning and export). On Linux both come
from ``VmHWM`` in /proc/self/status, the high-water mark of this process's
own memory: ``ru_maxrss`` of a freshly started child still carries the
parent's resident set from before the exec, so it overstates a small run.
Elsewhere ``resource.getrusage(RUSAGE_SELF).ru_maxrss`` is used.
"""

import json
import os
import resource
import sys


def _rss_mb():
    try:
        with open("/proc/self/status", encoding="ascii") as f:
            for line in f:
                if line.startswith("VmHWM:"):
                    return float(line.split()[1]) / 1024.0
    except OSError:
        pass
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


def main(path, style):
    sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
    import numpy  # noqa: F401

    import inkreach.arms  # noqa: F401
    import inkreach.export  # noqa: F401
    import inkreach.motion  # noqa: F401
    import inkreach.place  # noqa: F401
    import inkreach.plan  # noqa: F401
    import inkreach.route  # noqa: F401
    import inkreach.signals  # noqa: F401
    import inkreach.trace  # noqa: F401
    from _stages import end_to_end

    base = _rss_mb()
    seconds, p, _ = end_to_end(path, style)
    print(json.dumps({"baseline_mb": base, "peak_mb": _rss_mb(), "seconds": seconds,
                      "rows": len(p.stream)}))


if __name__ == "__main__":
    main(sys.argv[1], sys.argv[2])
