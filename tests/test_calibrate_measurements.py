"""Measurement CSV: the template round-trips; bad rows get one-line messages."""

import csv
import io

import numpy as np
import pytest

from inkreach.calibrate import measurement_template, read_measurements
from inkreach.errors import InkreachError

Q = np.deg2rad([[120.0, 60.0], [100.0, 40.0], [140.0, 80.0], [110.5, 70.25]])
XY = np.array([[0.4, 206.1], [40.2, 190.0], [-39.5, 190.3], [-10.0, 150.0]])


def _filled(q=Q, xy=XY):
    rows = measurement_template(q).splitlines()
    out = [rows[0]] + [r.rstrip(",") + f",{x},{y}" for r, (x, y) in zip(rows[1:], xy)]
    return "\n".join(out) + "\n"


def test_template_is_csv_with_the_fixed_header_and_blank_positions():
    text = measurement_template(Q)
    rows = list(csv.reader(io.StringIO(text)))  # Python's csv module as the reader
    assert rows[0] == ["dot", "theta1_deg", "theta2_deg", "x_mm", "y_mm"]
    assert [r[0] for r in rows[1:]] == ["1", "2", "3", "4"]
    assert all(r[3] == "" and r[4] == "" for r in rows[1:])
    np.testing.assert_allclose(np.array([[float(r[1]), float(r[2])] for r in rows[1:]]),
                               np.rad2deg(Q), atol=1e-6)


def test_filled_template_reads_back_angles_in_radians(tmp_path):
    path = tmp_path / "measurements.csv"
    path.write_text(_filled())
    for source in (path, str(path), _filled()):
        q, xy = read_measurements(source)
        np.testing.assert_allclose(q, Q, atol=1e-8)
        np.testing.assert_allclose(xy, XY)


def test_comments_blank_lines_extra_columns_and_column_order_are_accepted():
    text = ("# measured with a steel rule\n"
            "y_mm,x_mm,note,dot,theta2_deg,theta1_deg\n\n"
            "206.1,0.4,ok,1,60,120\n190.0,40.2,,2,40,100\n190.3,-39.5,smudged,3,80,140\n")
    q, xy = read_measurements(text)
    np.testing.assert_allclose(xy, XY[:3])
    np.testing.assert_allclose(q, Q[:3])


@pytest.mark.parametrize("edit, pattern", [
    (lambda t: t.replace(",0.4,206.1", ",,206.1"), r"line 2: x_mm of dot 1 is empty"),
    (lambda t: t.replace(",40.2,190.0", ",40.2,abc"), r"line 3: y_mm of dot 2 is 'abc', not a number"),
    (lambda t: t.replace(",40.2,190.0", ",inf,190.0"), r"not a finite number"),
    (lambda t: t.replace(",40.2,190.0", ",nan,190.0"), r"not a finite number"),
    (lambda t: t.replace("\n3,", "\n1,"), r"dot 1 appears again \(first on line 2\)"),
    (lambda t: t.replace("\n2,", "\ntwo,"), r"not a whole number"),
    (lambda t: t.replace("x_mm,", "xx,"), r"header lacks x_mm"),
    (lambda t: t.splitlines()[0] + "\n" + t.splitlines()[1] + "\n", r"hold 1 dot, fewer than"),
    (lambda t: "", r"empty"),
])
def test_bad_rows_are_refused_with_one_line_messages(edit, pattern):
    with pytest.raises(InkreachError, match=pattern) as exc:
        read_measurements(edit(_filled()) or "\n")
    assert "\n" not in str(exc.value)


def test_a_missing_file_is_refused_plainly(tmp_path):
    with pytest.raises(InkreachError, match="does not exist"):
        read_measurements(tmp_path / "nope.csv")
