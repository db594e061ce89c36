"""The output folder is replaced as a whole: interrupts, two writers, stale and foreign files.

The interrupt and concurrency tests run the real command line in real
processes and send real signals. A small ``sitecustomize`` (used by these
tests only) slows the file operations of the write phase so that the
signals land inside it, and marks when the write phase begins.
"""

import json
import os
import random
import signal
import subprocess
import sys
import time

import pytest
from PIL import Image, ImageDraw

from inkreach.errors import InkreachError

_SLOW_FS = '''
import os, tempfile, time
_d = float(os.environ.get("INKREACH_TEST_FS_DELAY", "0") or 0)
_mark = os.environ.get("INKREACH_TEST_WRITE_MARK")
if _d or _mark:
    def _slow(f):
        def g(*a, **k):
            time.sleep(_d)
            return f(*a, **k)
        return g
    os.rename, os.replace, os.fsync = _slow(os.rename), _slow(os.replace), _slow(os.fsync)
    _mkdtemp = tempfile.mkdtemp
    def _marked(*a, **k):
        if _mark and not os.path.exists(_mark):
            open(_mark, "w").close()
        return _mkdtemp(*a, **k)
    tempfile.mkdtemp = _marked
'''


def _replace_folder():
    from inkreach.export.folder import replace_folder
    return replace_folder


@pytest.fixture(scope="module")
def slow_site(tmp_path_factory):
    d = tmp_path_factory.mktemp("site")
    (d / "sitecustomize.py").write_text(_SLOW_FS)
    return d


@pytest.fixture(scope="module")
def pic(tmp_path_factory):
    path = tmp_path_factory.mktemp("pic") / "pic.png"
    im = Image.new("L", (120, 100), 255)
    ImageDraw.Draw(im).ellipse([20, 20, 100, 80], outline=0, width=3)
    im.save(path)
    return path


def _env(site, **extra):
    env = {**os.environ, "PYTHONUNBUFFERED": "1"}
    env["PYTHONPATH"] = os.pathsep.join([str(site)] + [p for p in
                                                       [os.environ.get("PYTHONPATH")] if p])
    env.update({k: str(v) for k, v in extra.items()})
    return env


def _plan_cmd(pic, out, arm="default"):
    return [sys.executable, "-m", "inkreach", "plan", str(pic), "--out", str(out), "-q",
            "--arm", arm, "--set", "fidelity=false"]


def _listing(folder):
    return {n: (folder / n).read_bytes() for n in os.listdir(folder)}


def _is_complete_plan(folder):
    """A folder holding exactly the files its manifest lists, all readable."""
    names = set(os.listdir(folder))
    manifest = json.loads((folder / ".inkreach-manifest.json").read_text())
    assert names == set(manifest["files"]) | {".inkreach-manifest.json"}, names
    stats = json.loads((folder / "plan.json").read_text())["stats"]
    rows = (folder / "joints.csv").read_text().strip().splitlines()
    assert len(rows) - 1 == stats["rows"]  # the stream and its figures are one plan
    return stats


# ---- in-process behaviour ------------------------------------------------------

def test_a_new_plan_replaces_every_file_of_the_old_one(tmp_path):
    rf = _replace_folder()
    out = tmp_path / "out"
    rf(out, {"plan.json": "{}", "stepper.csv": "old steps"})
    rf(out, {"plan.json": "{\"new\": 1}", "servo.csv": "pulses"})
    assert sorted(os.listdir(out)) == [".inkreach-manifest.json", "SAFETY.txt", "plan.json",
                                       "servo.csv"]
    assert sorted(os.listdir(tmp_path)) == ["out"]  # no lock, no temporary folders


def test_a_new_plan_takes_the_old_plans_run_record_away(tmp_path):
    # run-log.txt and run-state.json record running the old plan; kept beside
    # a new plan, --resume would continue the wrong stream
    rf = _replace_folder()
    out = tmp_path / "out"
    rf(out, {"plan.json": "{}"})
    (out / "run-log.txt").write_text("started\n")
    (out / "run-state.json").write_text("{}")
    rf(out, {"plan.json": "{\"new\": 1}"})
    assert sorted(os.listdir(out)) == [".inkreach-manifest.json", "SAFETY.txt", "plan.json"]


def test_a_serial_plan_then_a_five_bar_plan_leaves_no_stale_stepper_file(pic, tmp_path):
    import inkreach
    out = tmp_path / "out"
    inkreach.plan(pic, arm="serial", fidelity=False, signals="stepper").save(out)
    assert (out / "stepper.csv").exists()
    inkreach.plan(pic, arm="default", fidelity=False, signals="servo").save(out)
    assert not (out / "stepper.csv").exists()
    _is_complete_plan(out)


def test_a_folder_holding_the_users_own_files_is_refused_and_kept(tmp_path):
    rf = _replace_folder()
    out = tmp_path / "out"
    out.mkdir()
    (out / "notes.txt").write_text("mine")
    (out / "plan.json").write_text("an older plan")
    before = _listing(out)
    with pytest.raises(InkreachError, match="notes.txt"):
        rf(out, {"plan.json": "{}"})
    assert _listing(out) == before
    assert sorted(os.listdir(tmp_path)) == ["out"]


def test_a_file_added_to_an_output_folder_later_is_the_users_and_kept(tmp_path):
    rf = _replace_folder()
    out = tmp_path / "out"
    rf(out, {"plan.json": "{}"})
    (out / "my-notes.txt").write_text("mine")
    with pytest.raises(InkreachError, match="my-notes.txt"):
        rf(out, {"plan.json": "{}"})
    assert (out / "my-notes.txt").read_text() == "mine"


def test_a_failure_while_writing_leaves_the_old_folder_and_no_temporary(tmp_path, monkeypatch):
    rf = _replace_folder()
    out = tmp_path / "out"
    rf(out, {"plan.json": "old"})
    before = _listing(out)
    import inkreach.export.folder as folder

    def full(*a, **k):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(folder, "_swap", full)
    with pytest.raises(OSError):
        rf(out, {"plan.json": "new"})
    monkeypatch.undo()
    assert _listing(out) == before
    assert sorted(os.listdir(tmp_path)) == ["out"]


def test_a_disk_full_error_is_one_line_on_the_command_line(pic, tmp_path, capsys,
                                                          monkeypatch):
    import inkreach.export.folder as folder
    from inkreach.cli import main

    def full(*a, **k):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(folder, "_write_all", full)
    code = main(["plan", str(pic), "--out", str(tmp_path / "out"), "-q",
                 "--set", "fidelity=false"])
    err = capsys.readouterr().err
    assert code == 2 and err.count("\n") == 1 and "disk is full" in err
    assert os.listdir(tmp_path) == []


def test_a_killed_run_between_the_renames_is_repaired_by_the_next(tmp_path):
    rf = _replace_folder()
    out = tmp_path / "out"
    rf(out, {"plan.json": "old"})
    # what a run killed between its two renames leaves: the old folder aside,
    # a half-written new one, no output folder
    os.rename(out, tmp_path / ".out.old-abc")
    (tmp_path / ".out.new-def").mkdir()
    rf(out, {"plan.json": "new"})
    assert (out / "plan.json").read_text() == "new"
    assert sorted(os.listdir(tmp_path)) == ["out"]


# ---- real processes, real signals ----------------------------------------------

def _old_folder(out):
    _replace_folder()(out, {"plan.json": json.dumps({"stats": {"rows": 1}}),
                            "joints.csv": "t_s\n0\n", "stepper.csv": "old steps\n"})
    return _listing(out)


def _wait_for(path, proc, limit=120.0):
    t0 = time.monotonic()
    while not os.path.exists(path):
        if proc.poll() is not None or time.monotonic() - t0 > limit:
            return False
        time.sleep(0.005)
    return True


def test_ctrl_c_at_any_instant_of_the_write_phase_leaves_old_or_new(slow_site, pic, tmp_path):
    rng = random.Random(20261203)
    outcomes = {"old": 0, "new": 0}
    for trial in range(8):
        work = tmp_path / f"t{trial}"
        work.mkdir()
        out = work / "out"
        old = _old_folder(out)
        mark = tmp_path / f"mark{trial}"
        proc = subprocess.Popen(_plan_cmd(pic, out), stdout=subprocess.PIPE,
                                stderr=subprocess.PIPE, text=True,
                                env=_env(slow_site, INKREACH_TEST_FS_DELAY=0.03,
                                         INKREACH_TEST_WRITE_MARK=mark))
        try:
            assert _wait_for(mark, proc), proc.communicate(timeout=60)
            # the write phase takes about 0.5 s with these delays (about a
            # dozen slowed calls); land anywhere in it, and a little beyond
            time.sleep(rng.uniform(0.0, 0.7))
            if proc.poll() is None:
                proc.send_signal(signal.SIGINT)
            _, err = proc.communicate(timeout=60)
        finally:
            if proc.poll() is None:
                proc.kill()
                proc.wait()
        assert "Traceback" not in err and len(err.strip().splitlines()) <= 1, err
        assert sorted(os.listdir(work)) == ["out"], os.listdir(work)  # nothing stray
        if _listing(out) == old:
            outcomes["old"] += 1
            assert proc.returncode == 130 and "already been written" not in err, err
        else:
            outcomes["new"] += 1
            _is_complete_plan(out)
            assert proc.returncode == 0 or "already been written" in err, err
    assert sum(outcomes.values()) == 8


def test_ctrl_c_while_starting_exits_quietly_with_130(pic, tmp_path):
    rng = random.Random(7)
    for trial in range(5):
        proc = subprocess.Popen(_plan_cmd(pic, tmp_path / "out"), stdout=subprocess.PIPE,
                                stderr=subprocess.PIPE, text=True)
        time.sleep(rng.uniform(0.05, 0.6))
        proc.send_signal(signal.SIGINT)
        _, err = proc.communicate(timeout=60)
        # A signal that beats the interpreter's own start-up (before the
        # package's first line runs) is Python's to report: -SIGINT, or its
        # KeyboardInterrupt from runpy with no frame of ours. Past that point
        # the exit is quiet.
        before_us = "Traceback" in err and "inkreach" not in err.replace("-m inkreach", "")
        if before_us:
            continue
        assert proc.returncode in (130, -signal.SIGINT, 0), (proc.returncode, err)
        assert "Traceback" not in err and len(err.strip().splitlines()) <= 1, err
        assert not (tmp_path / "out").exists() or _is_complete_plan(tmp_path / "out")


def test_two_plans_into_one_new_folder_at_once_do_not_mix(slow_site, pic, tmp_path):
    out = tmp_path / "out"
    env = _env(slow_site, INKREACH_TEST_FS_DELAY=0.02)
    procs = [subprocess.Popen(_plan_cmd(pic, out, arm), stdout=subprocess.PIPE,
                              stderr=subprocess.PIPE, text=True, env=env)
             for arm in ("default", "serial")]
    results = [p.communicate(timeout=180) for p in procs]
    for p, (_, err) in zip(procs, results):
        assert p.returncode == 0, err
    stats = _is_complete_plan(out)
    names = set(os.listdir(out))
    # the default arm has a [servo] table, the serial one a [stepper] table:
    # the signal files must come from the same plan as plan.json
    if stats["arm"] == "desk five-bar":
        assert "servo.csv" in names and "stepper.csv" not in names
    else:
        assert "stepper.csv" in names and "servo.csv" not in names
    assert sorted(os.listdir(tmp_path)) == ["out"]
