"""The targets table of bench/RESULTS.md: each goal, what the run measured, met or not."""

from _report import table

__all__ = ["section_targets"]


#: Targets measured outside bench/run.py, whose rows a new run carries over from the
#: previous RESULTS.md: mutation testing takes hours (tests/MUTATION.md says how).
_CARRIED = ("≥ 90 % of mutants killed",)


def _carried_rows(previous):
    """Rows of the previous targets table for the targets in ``_CARRIED``."""
    rows = []
    for line in (previous or "").splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) == 3 and cells[0].startswith(_CARRIED):
            rows.append(cells)
    return rows


def section_targets(results, previous=""):
    """The targets table; ``previous`` is the old RESULTS.md, for the carried rows."""
    rows = []

    def mark(ok):
        return "met" if ok else "not met"

    e2e = [(name, m, ref) for name, (kind, mp, m, ref) in results.get("e2e", {}).items()
           if kind == "photo" and mp == 1.0]
    if e2e:
        name, m, ref = e2e[0]
        rows.append(["1-MP photo end to end ≤ 2× reference", f"{m / ref:.2f}× ({m:.2f} s vs "
                     f"{ref:.3f} s, {name})", mark(m / ref <= 2.0)])
    else:
        rows.append(["1-MP photo end to end ≤ 2× reference", "not available: not measured "
                     "(needs the full run)", "—"])
    gaps, tr = results.get("route", ([], []))
    if gaps:
        g, r = max(gaps), max(tr)
        rows.append(["pen-up travel within 5% of LKH at < 1/10 of its time",
                     f"worst {g:+.1f}% at worst {r:.3f}× LKH's time over {len(gaps)} sets "
                     "of ≥ 100 strokes",
                     mark(g <= 5.0 and r < 0.1)])
    else:
        rows.append(["pen-up travel within 5% of LKH at < 1/10 of its time",
                     "not available: no LKH comparison", "—"])
    imp = results.get("import")
    if imp:
        rows.append(["package import ≤ 0.3 s", f"{imp[0]:.4f} s ({imp[0] / imp[1]:.3f}× import "
                     "numpy in the same run)", mark(imp[0] <= 0.3)])
    mem = results.get("memory", {})
    m12 = [v for (mp, _), v in mem.items() if mp == 12.0]
    if m12:
        rows.append(["peak memory < 400 MB for 12 MP", f"{max(m12):.0f} MB (worst style)",
                     mark(max(m12) < 400)])
    else:
        rows.append(["peak memory < 400 MB for 12 MP", "not available: not measured "
                     "(needs the full run)", "—"])
    ik = results.get("ik", {})
    if ik:
        rows.append(["≥ 5M IK + conditioning evaluations per second on the five-bar",
                     ", ".join(f"{k}: {v / 1e6:.2f} M/s" for k, v in ik.items()),
                     mark(ik.get("default", 0.0) >= 5e6)])
    mo = results.get("motion")
    if mo:
        rows.append(["pen-down ≤ 1.05× TOPP-RA, pen-up ≤ 1.05× optimal, whole ≤ 1.08× bound",
                     f"worst {mo['down']:.3f}× (TOPP-RA on the stroke with corners rounded within "
                     f"the tolerance; {mo['down_rows']:.3f}× with its strokes in whole periods, "
                     f"{mo['down_spline']:.3f}× on the spline through the vertices) / "
                     f"{mo['up']:.3f}× / {mo['total']:.3f}×",
                     mark(mo["down"] <= 1.05 and mo["up"] <= 1.05 and mo["total"] <= 1.08)])
    rows.extend(_carried_rows(previous))
    return ("Goals, not assertions. Quote ratios measured in one run.\n\n"
            + table(["target", "measured", "status"], rows))
