"""The command line: every command works, and prints what a person needs."""

import json
import os
import subprocess
import sys

import numpy as np
import pytest
from PIL import Image, ImageDraw

from inkreach.cli import main


@pytest.fixture()
def emblem_png(tmp_path):
    from inkreach.cli.demo import emblem
    p = tmp_path / "emblem.png"
    emblem(240).save(p)
    return p


def test_plan_prints_the_figures_and_writes_the_files(emblem_png, tmp_path, capsys):
    out = tmp_path / "out"
    assert main(["plan", str(emblem_png), "--style", "centerline", "--out", str(out)]) == 0
    text = capsys.readouterr().out
    for words in ("strokes", "pen lifts", "pen-down length", "pen-up travel", "drawing time",
                  "drawing size", "worst conditioning", "likeness", "plan.json"):
        assert words in text
    names = set(os.listdir(out))
    # exactly the README's output files for the default arm (servo signals),
    # no temporary or stray file left beside them
    # (and the manifest that records what the tool wrote)
    assert names == {"plan.json", "joints.csv", "preview.svg", "preview.png", "order.png",
                     "simulated.png", "plan.h", "SAFETY.txt", "servo.csv",
                     ".inkreach-manifest.json"}


def test_plan_json_format_is_for_scripts(emblem_png, tmp_path, capsys):
    assert main(["plan", str(emblem_png), "--style", "contour", "--out", str(tmp_path / "o"),
                 "--format", "json", "--set", "levels=3"]) == 0
    data = json.loads(capsys.readouterr().out)
    for key in ("strokes", "pen_lifts", "pen_down_mm", "pen_up_mm", "estimated_s",
                "min_conditioning"):
        assert key in data["stats"]
    assert data["files"]["joints.csv"].endswith("joints.csv")


def test_demo_runs_the_whole_job(tmp_path, capsys):
    assert main(["demo", "--out", str(tmp_path / "demo")]) == 0
    assert (tmp_path / "demo" / "joints.csv").is_file()
    assert "strokes" in capsys.readouterr().out


@pytest.mark.parametrize("arm", [None, "wide", "serial"])
def test_arm_reports_areas_rectangles_and_a_map(arm, tmp_path, capsys):
    args = ["arm"] + ([arm] if arm else []) + ["--out", str(tmp_path / "a")]
    assert main(args) == 0
    text = capsys.readouterr().out
    assert "usable area" in text and "4:3" in text and "1:1" in text
    assert "worst conditioning" in text
    with Image.open(tmp_path / "a" / "arm_map.png") as im:
        assert im.size[0] >= 400
    rep = json.loads((tmp_path / "a" / "arm.json").read_text())
    assert 0 < rep["usable_area_mm2"] <= rep["reach_area_mm2"]


def test_arm_accepts_an_arm_file(tmp_path, capsys):
    from inkreach.arms.armfile import builtin_arm_text
    f = tmp_path / "mine.toml"
    f.write_text(builtin_arm_text("wide"))
    assert main(["arm", str(f), "--out", str(tmp_path / "r"), "--format", "json"]) == 0
    assert json.loads(capsys.readouterr().out)["kind"] == "five-bar"


def test_styles_lists_every_style_and_its_options(capsys):
    assert main(["styles"]) == 0
    text = capsys.readouterr().out
    for s in ("outline", "centerline", "hatch", "stipple", "contour", "dots", "levels"):
        assert s in text


@pytest.mark.parametrize("cmd", ["plan", "demo", "arm", "serve", "calibrate"])
def test_every_command_explains_its_options(cmd, capsys):
    with pytest.raises(SystemExit) as e:
        main([cmd, "--help"])
    assert e.value.code == 0
    text = capsys.readouterr().out
    assert "--out" in text or "--port" in text
    assert "example" in text


def test_python_dash_m_runs_the_command_line():
    r = subprocess.run([sys.executable, "-m", "inkreach", "--version"], capture_output=True,
                       text=True, timeout=60)
    assert r.returncode == 0 and r.stdout.startswith("inkreach ")


def test_calibrate_sheet_then_fit_improves_the_arm(tmp_path, capsys):
    import csv
    import dataclasses

    from inkreach.arms import default_arm, load_arm
    out = tmp_path / "cal"
    assert main(["calibrate", "sheet", "--out", str(out)]) == 0
    rows = list(csv.reader(open(out / "measurements.csv")))
    q = np.deg2rad([[float(r[1]), float(r[2])] for r in rows[1:]])
    # a "real" arm a little off its drawing: the dots land where it puts them
    real = dataclasses.replace(default_arm(), left_upper=101.0, right_lower=149.0)
    xy = real.fk(q) + np.random.default_rng(1).normal(0, 0.05, (len(q), 2))
    with open(out / "measured.csv", "w") as fh:
        fh.write(",".join(rows[0]) + "\n")
        for r, p in zip(rows[1:], xy):
            fh.write(f"{r[0]},{r[1]},{r[2]},{p[0]:.3f},{p[1]:.3f}\n")
    assert main(["calibrate", "fit", str(out / "measured.csv"), "--out", str(out)]) == 0
    report = capsys.readouterr().out
    assert "after" in report
    fitted = load_arm(out / "arm_calibrated.toml")
    assert fitted.left_upper == pytest.approx(101.0, abs=0.3)
    assert fitted.right_lower == pytest.approx(149.0, abs=0.3)
