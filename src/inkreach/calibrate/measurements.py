"""The measurement sheet: a CSV template to fill in, and its reader."""

import csv
import math
import os

import numpy as np

from ..errors import InkreachError

__all__ = ["measurement_template", "read_measurements", "HEADER"]

HEADER = ("dot", "theta1_deg", "theta2_deg", "x_mm", "y_mm")


def measurement_template(targets):
    """CSV text listing each dot's commanded angles, with blank columns to measure.

    Parameters
    ----------
    targets : array_like, shape (n, 2)
        Commanded joint angles, radians, in the order the dots are drawn
        (dot 1 first).

    Returns
    -------
    str
        CSV with header ``dot,theta1_deg,theta2_deg,x_mm,y_mm``; angles in
        degrees to 1e-6; ``x_mm`` and ``y_mm`` empty, for the dot's
        position read off the printed sheet.

    Examples
    --------
    >>> import numpy as np
    >>> print(measurement_template(np.deg2rad([[120.0, 60.0]])), end="")
    dot,theta1_deg,theta2_deg,x_mm,y_mm
    1,120.000000,60.000000,,
    """
    q = np.rad2deg(np.asarray(targets, dtype=float).reshape(-1, 2))
    lines = [",".join(HEADER)]
    lines += [f"{i},{a:.6f},{b:.6f},," for i, (a, b) in enumerate(q, start=1)]
    return "\n".join(lines) + "\n"


def read_measurements(source, min_points=3):
    """Read a filled-in measurement CSV.

    Parameters
    ----------
    source : str or os.PathLike
        A path to the CSV file, or the CSV text itself (any string holding
        a line break or a comma is taken as text).
    min_points : int
        Fewest dots accepted.

    Returns
    -------
    q : ndarray, shape (n, 2)
        Commanded joint angles, radians, in file order.
    xy : ndarray, shape (n, 2)
        Measured dot positions, mm.

    Raises
    ------
    InkreachError
        One line naming the file line at fault: a missing column, an empty
        or non-numeric or non-finite value, a repeated dot number, or fewer
        than ``min_points`` dots. Blank lines and lines starting with ``#``
        are skipped; extra columns are ignored.

    Examples
    --------
    >>> q, xy = read_measurements('''dot,theta1_deg,theta2_deg,x_mm,y_mm
    ... 1,120,60,0.4,206.1
    ... 2,100,40,40.2,190.0
    ... 3,140,80,-39.5,190.3
    ... ''')
    >>> xy.shape, round(float(np.rad2deg(q[0, 0])), 6)
    ((3, 2), 120.0)
    """
    text, name = _text(source)
    rows = [(i, line) for i, line in enumerate(text.splitlines(), start=1)
            if line.strip() and not line.lstrip().startswith("#")]
    if not rows:
        raise InkreachError(f"measurements {name} are empty; fill in the template "
                            "written with the calibration sheet")
    head_no, head = rows[0]
    header = [h.strip().lower() for h in next(csv.reader([head]))]
    missing = [h for h in HEADER if h not in header]
    if missing:
        raise InkreachError(f"measurements {name} line {head_no}: the header lacks "
                            f"{', '.join(missing)}; it must read {','.join(HEADER)}")
    col = {h: header.index(h) for h in HEADER}
    seen = {}
    dots, vals = [], []
    for line_no, line in rows[1:]:
        cells = [c.strip() for c in next(csv.reader([line]))]
        where = f"measurements {name} line {line_no}"
        dot_txt = cells[col["dot"]] if col["dot"] < len(cells) else ""
        try:
            dot = int(dot_txt)
        except ValueError:
            raise InkreachError(f"{where}: dot number {dot_txt!r} is not a whole number; "
                                "keep the numbers from the template") from None
        if dot in seen:
            raise InkreachError(f"{where}: dot {dot} appears again (first on line "
                                f"{seen[dot]}); keep one row per dot")
        seen[dot] = line_no
        row = []
        for h in HEADER[1:]:
            cell = cells[col[h]] if col[h] < len(cells) else ""
            if cell == "":
                raise InkreachError(f"{where}: {h} of dot {dot} is empty; fill in the "
                                    "measured position or delete the row")
            try:
                v = float(cell)
            except ValueError:
                raise InkreachError(f"{where}: {h} of dot {dot} is {cell!r}, not a number; "
                                    "write it like 12.5") from None
            if not math.isfinite(v):
                raise InkreachError(f"{where}: {h} of dot {dot} is {cell!r}, not a finite "
                                    "number; write the measured value in mm")
            row.append(v)
        dots.append(dot)
        vals.append(row)
    if len(vals) < min_points:
        raise InkreachError(f"measurements {name} hold {len(vals)} dot"
                            f"{'' if len(vals) == 1 else 's'}, fewer than the {min_points} "
                            "needed; measure more dots")
    a = np.array(vals, dtype=float)
    return np.deg2rad(a[:, :2]), a[:, 2:]


def _text(source):
    """(text, name for messages) from a path or from CSV text."""
    if isinstance(source, bytes):
        source = source.decode("utf-8", "replace")
    if isinstance(source, str) and ("\n" in source or "," in source):
        return source, "text"
    path = os.fspath(source)
    if not os.path.isfile(path):
        raise InkreachError(f"measurements file {path} does not exist; give the path of the "
                            "filled-in CSV")
    try:
        with open(path, encoding="utf-8-sig") as fh:
            return fh.read(10_000_001), path
    except (OSError, UnicodeDecodeError) as exc:
        raise InkreachError(f"measurements file {path} cannot be read ({exc}); save it as "
                            "plain UTF-8 CSV") from None
