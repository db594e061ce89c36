"""Bad input: one line saying what is wrong, a non-zero exit, no traceback, no file."""

import io
import os
import struct
import subprocess
import sys
import zlib

import numpy as np
import pytest
from PIL import Image, ImageDraw

from inkreach.arms.armfile import builtin_arm_text
from inkreach.cli import main


def _png_header_only(path, w, h):
    def chunk(kind, data):
        return (struct.pack(">I", len(data)) + kind + data
                + struct.pack(">I", zlib.crc32(kind + data) & 0xFFFFFFFF))
    ihdr = struct.pack(">IIBBBBB", w, h, 8, 0, 0, 0, 0)
    path.write_bytes(b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", ihdr)
                     + chunk(b"IDAT", zlib.compress(b"\x00" * 64)) + chunk(b"IEND", b""))


def _good_picture(path):
    im = Image.new("L", (200, 160), 255)
    ImageDraw.Draw(im).ellipse([40, 30, 160, 130], outline=0, width=4)
    im.save(path)
    return path


def _bad_pictures(tmp):
    cases = {}
    (tmp / "empty.png").write_bytes(b"")
    cases["empty file"] = (tmp / "empty.png", "empty")
    (tmp / "text.png").write_text("this is not a picture\n")
    cases["text named png"] = (tmp / "text.png", "not a picture")
    buf = io.BytesIO()
    Image.new("RGB", (300, 200), "gray").save(buf, "JPEG")
    (tmp / "cut.jpg").write_bytes(buf.getvalue()[: len(buf.getvalue()) // 2])
    cases["truncated jpeg"] = (tmp / "cut.jpg", "")
    _png_header_only(tmp / "huge.png", 60000, 60000)
    cases["huge header"] = (tmp / "huge.png", "")
    Image.new("L", (1, 1), 0).save(tmp / "one.png")
    cases["1x1"] = (tmp / "one.png", "")
    Image.new("L", (300, 200), 255).save(tmp / "white.png")
    cases["all white"] = (tmp / "white.png", "nothing to draw")
    cases["missing"] = (tmp / "nope.png", "")
    (tmp / "folder.png").mkdir()
    cases["folder"] = (tmp / "folder.png", "folder")
    return cases


def _run(args, capsys):
    code = main(args)
    err = capsys.readouterr().err
    return code, err


def _assert_clean_failure(code, err, out_dir, before=None, words=""):
    assert code != 0
    lines = [l for l in err.strip().splitlines() if l.strip()]
    assert len(lines) == 1, err
    assert "Traceback" not in err and "internal error" not in err
    assert words.lower() in err.lower()
    if before is None:
        assert not os.path.exists(out_dir) or not os.listdir(out_dir)
    else:
        assert sorted(os.listdir(out_dir)) == sorted(before)
        for name, data in before.items():
            assert (out_dir / name).read_bytes() == data


@pytest.mark.parametrize("case", ["empty file", "text named png", "truncated jpeg",
                                  "huge header", "1x1", "all white", "missing", "folder"])
def test_bad_pictures_fail_cleanly(case, tmp_path, capsys):
    path, words = _bad_pictures(tmp_path)[case]
    out = tmp_path / "out"
    code, err = _run(["plan", str(path), "--out", str(out)], capsys)
    _assert_clean_failure(code, err, out, words=words)


def test_a_folder_that_held_files_keeps_them_untouched(tmp_path, capsys):
    out = tmp_path / "out"
    out.mkdir()
    (out / "notes.txt").write_text("mine")
    (out / "plan.json").write_text("an older plan")
    before = {p.name: p.read_bytes() for p in out.iterdir()}
    path, _ = _bad_pictures(tmp_path)["all white"]
    code, err = _run(["plan", str(path), "--out", str(out)], capsys)
    _assert_clean_failure(code, err, out, before=before)


@pytest.mark.parametrize("name,mode,size", [("deep.png", "I;16", (240, 180)),
                                            ("cmyk.jpg", "CMYK", (240, 180)),
                                            ("anim.gif", "P", (240, 180)),
                                            ("pal.png", "P", (240, 180))])
def test_unusual_but_valid_pictures_plan(name, mode, size, tmp_path, capsys):
    base = Image.new("L", size, 255)
    ImageDraw.Draw(base).rectangle([40, 40, 200, 140], outline=0, width=5)
    path = tmp_path / name
    if mode == "I;16":
        Image.fromarray((np.asarray(base, np.uint16) * 257)).save(path)
    elif mode == "CMYK":
        base.convert("CMYK").save(path, "JPEG")
    elif name.endswith(".gif"):
        frames = [base.convert("P"), Image.new("P", size, 0)]
        frames[0].save(path, save_all=True, append_images=frames[1:], duration=100)
    else:
        p = base.convert("RGBA")
        a = np.asarray(p).copy()
        a[:20, :, 3] = 0
        Image.fromarray(a).convert("P").save(path, transparency=0)
    out = tmp_path / "out"
    assert main(["plan", str(path), "--style", "centerline", "--out", str(out), "-q"]) == 0
    assert (out / "joints.csv").is_file()


def _arm_variant(tmp, old, new, name="bad.toml"):
    text = builtin_arm_text("default")
    assert old in text
    p = tmp / name
    p.write_text(text.replace(old, new))
    return p


@pytest.mark.parametrize("old,new,words", [
    ("[limits]", "[limits", "TOML"),
    ('kind = "five-bar"', 'kind = "scara"', "kind"),
    ("left_upper = 100.0\n", "", "missing left_upper"),
    ("left_upper = 100.0", "left_upper = -100.0", "greater than zero"),
    ("left_upper = 100.0", "left_upper = 0.0", "greater than zero"),
    ("left_upper = 100.0", "left_upper = nan", "finite"),
    ("left_upper = 100.0", "left_upper = inf", "finite"),
    ("theta2_deg = [-30.0, 150.0]", "theta2_deg = [150.0, -30.0]", "reversed"),
    ("min_conditioning = 0.3", "min_conditioning = 0.0", "min_conditioning"),
    ("min_conditioning = 0.3", "min_conditioning = 1.2", "min_conditioning"),
    ("right_motor = [40.0, 0.0]", "right_motor = [900.0, 0.0]", "cannot close"),
    ("min_conditioning = 0.3", "min_conditioning = 0.999", "too small"),
])
def test_bad_arm_files_fail_cleanly(old, new, words, tmp_path, capsys):
    arm = _arm_variant(tmp_path, old, new)
    pic = _good_picture(tmp_path / "pic.png")
    out = tmp_path / "out"
    code, err = _run(["plan", str(pic), "--arm", str(arm), "--out", str(out)], capsys)
    _assert_clean_failure(code, err, out, words=words)


@pytest.mark.parametrize("args,words", [
    (["--style", "wavy"], "invalid choice"),
    (["--style", "hatch", "--set", "spacing=-2"], "spacing"),
    (["--style", "stipple", "--set", "dots=0"], "dots"),
    (["--set", "sparkle=3"], "sparkle"),
    (["--paper", "1000 1000 100 100"], "paper"),
    (["--size", "5000"], "does not fit"),
    (["--chord-tol", "-1"], "chord_tol"),
])
def test_bad_options_fail_cleanly(args, words, tmp_path, capsys):
    pic = _good_picture(tmp_path / "pic.png")
    out = tmp_path / "out"
    try:
        code, err = _run(["plan", str(pic), "--out", str(out)] + args, capsys)
    except SystemExit as e:  # argparse refuses before anything runs
        code, err = e.code, capsys.readouterr().err
    _assert_clean_failure(code, err, out, words=words)


def test_output_folder_that_is_a_file_fails_cleanly(tmp_path, capsys):
    pic = _good_picture(tmp_path / "pic.png")
    f = tmp_path / "afile"
    f.write_text("keep me")
    code, err = _run(["plan", str(pic), "--out", str(f)], capsys)
    assert code != 0 and "is a file" in err and f.read_text() == "keep me"


def test_output_folder_not_writable_fails_cleanly(tmp_path, capsys):
    pic = _good_picture(tmp_path / "pic.png")
    if os.geteuid() == 0:
        # root may write anywhere on disk, but not make folders in /proc
        target = "/proc/inkreach-test-out"
    else:
        ro = tmp_path / "ro"
        ro.mkdir()
        ro.chmod(0o500)
        target = str(ro / "out")
    code, err = _run(["plan", str(pic), "--out", target], capsys)
    assert code != 0 and len(err.strip().splitlines()) == 1
    assert "not writable" in err or "cannot be created" in err
    assert not os.path.exists(target)


def test_a_failing_run_prints_no_traceback_from_a_real_process(tmp_path):
    (tmp_path / "t.png").write_text("text")
    r = subprocess.run([sys.executable, "-m", "inkreach", "plan", str(tmp_path / "t.png"),
                        "--out", str(tmp_path / "o")], capture_output=True, text=True,
                       timeout=120)
    assert r.returncode != 0
    assert "Traceback" not in r.stderr and len(r.stderr.strip().splitlines()) == 1
    assert not (tmp_path / "o").exists()
