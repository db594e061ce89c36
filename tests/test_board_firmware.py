"""``inkreach firmware``: a complete sketch folder that compiles, written all or nothing."""

import os
import re
import shutil
import subprocess
import sys
import zlib

import pytest

from inkreach import InkreachError
from inkreach.arms import arm_to_toml, load_arm
from inkreach.board import board_config, config_header, write_firmware
from inkreach.board.protocol import cobs_decode, cobs_encode, crc16

from _board import HERE, need_compiler

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))


def _cli(*args, cwd=None):
    env = dict(os.environ, PYTHONPATH=os.path.join(ROOT, "src"))
    return subprocess.run([sys.executable, "-m", "inkreach", *args], capture_output=True,
                          text=True, env=env, cwd=cwd, timeout=120)


@pytest.mark.parametrize("arm_name, drive", [("default", "servo"), ("serial", "stepper")])
def test_written_folder_is_complete_and_compiles(tmp_path, arm_name, drive):
    need_compiler()
    out = tmp_path / "my_board"
    res = _cli("firmware", arm_name, "--out", str(out), "--drive", drive, "--pin-pen", "6")
    assert res.returncode == 0, res.stderr
    names = sorted(os.listdir(out))
    assert "my_board.ino" in names and "inkreach_config.h" in names and "PROTOCOL.md" in names
    for n in names:
        if n.endswith((".c", ".h", ".ino")):
            head = (out / n).read_text()[:600]
            assert "rehearse" in head.lower() and "power switch" in head
            assert "not a certified" in head.lower()
    cfg = (out / "inkreach_config.h").read_text()
    arm = load_arm(arm_name)
    assert f"0x{zlib.crc32(arm_to_toml(arm).encode()):08X}UL" in cfg
    assert "#define INK_PIN_PEN 6" in cfg
    assert f"#define INK_DRIVE {0 if drive == 'servo' else 1}" in cfg
    # the folder alone builds: portable C99, warnings as errors
    stub = tmp_path / "port.c"
    stub.write_text('#include "ink_core.h"\nvoid ink_port_write(const uint8_t *b, uint8_t n)'
                    '\n{ (void)b; (void)n; }\nint main(void) { static struct ink_core c;'
                    ' ink_init(&c, INK_HOME_Q1, INK_HOME_Q2); ink_tick(&c); return 0; }\n')
    cs = [str(out / n) for n in names if n.endswith(".c")]
    cc = shutil.which("cc") or shutil.which("gcc")
    r = subprocess.run([cc, "-std=c99", "-pedantic", "-Wall", "-Wextra", "-Werror", "-I",
                        str(out), "-o", str(tmp_path / "a.out"), *cs, str(stub)],
                       capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    # the sketch front-end is valid C++ against the Arduino names it uses
    cxx = shutil.which("c++") or shutil.which("g++")
    if cxx is None:
        pytest.skip("no C++ compiler to check the sketch front-end")
    r = subprocess.run([cxx, "-fsyntax-only", "-Wall", "-Wextra", "-Werror", "-x", "c++",
                        "-I", os.path.join(HERE, "arduino_stub"), "-I", str(out),
                        str(out / "my_board.ino")], capture_output=True, text=True)
    assert r.returncode == 0, r.stderr


def test_existing_folder_is_refused_and_nothing_is_left(tmp_path):
    out = tmp_path / "b"
    out.mkdir()
    (out / "keep.txt").write_text("mine")
    res = _cli("firmware", "default", "--out", str(out))
    assert res.returncode == 2 and len(res.stderr.strip().splitlines()) == 1
    assert os.listdir(out) == ["keep.txt"]
    assert sorted(os.listdir(tmp_path)) == ["b"]


def test_bad_pin_and_bad_arm_are_one_line_errors(tmp_path):
    for args in (["default", "--pin-step1", "3"], ["nope.toml"], ["default", "--period", "0"]):
        res = _cli("firmware", *args, "--out", str(tmp_path / "x"))
        assert res.returncode == 2, res
        assert len(res.stderr.strip().splitlines()) == 1 and "Traceback" not in res.stderr
        assert not (tmp_path / "x").exists()


def test_failure_while_writing_leaves_no_folder(tmp_path, monkeypatch):
    import inkreach.board.firmware_writer as fwm

    def broken(*a, **k):
        raise OSError(28, "No space left on device")
    real_open = open

    def failing_open(path, mode="r", *a, **k):
        if "w" in mode and str(path).endswith("ink_ring.c"):
            broken()
        return real_open(path, mode, *a, **k)
    monkeypatch.setattr(fwm, "open", failing_open, raising=False)
    with pytest.raises(InkreachError):
        write_firmware(load_arm("default"), tmp_path / "board")
    assert os.listdir(tmp_path) == []


def test_config_numbers_follow_the_arm_file():
    # built-in default arm file: 180 deg/s, 1500 deg/s^2, limits [30, 210] and
    # [-30, 150] deg, servo 500..2500 us over each joint's range; 20 ms period
    text = config_header(board_config(load_arm("default")))
    want = {"INK_DQ_MAX": 36001, "INK_DDQ_MAX": 6001, "INK_Q1_MIN": 300000,
            "INK_Q1_MAX": 2100000, "INK_Q2_MIN": -300000, "INK_PERIOD_US": 20000,
            "INK_PEN_UP_TICKS": 1200 * 16, "INK_PEN_DOWN_TICKS": 1700 * 16}
    for k, v in want.items():
        assert re.search(rf"#define {k} {v}U?L\b", text), k
    assert "{{300000L, 8000L}, {2100000L, 40000L}}" in text      # 500 us = 8000 ticks


def test_servo_period_shorter_than_a_pulse_is_refused():
    with pytest.raises(InkreachError, match="period"):
        board_config(load_arm("default"), "servo", period=0.002)


def test_python_codec_against_published_values():
    # CRC-16/IBM-3740 check value ("Catalogue of parametrised CRC algorithms", Greg Cook)
    assert crc16(b"123456789") == 0x29B1
    # CRC-32/ISO-HDLC check value, same catalogue: the arm hash's CRC
    assert zlib.crc32(b"123456789") == 0xCBF43926
    # COBS examples (Cheshire & Baker 1999, as tabulated in Wikipedia; from memory)
    for raw, enc in [("00", "0101"), ("0000", "010101"), ("001100", "01021101"),
                     ("11220033", "0311220233"), ("11223344", "0511223344"),
                     ("11000000", "0211010101")]:
        assert cobs_encode(bytes.fromhex(raw)).hex() == enc
        assert cobs_decode(bytes.fromhex(enc)).hex() == raw
    seq = bytes(range(1, 255))
    assert cobs_encode(seq) == b"\xff" + seq
    assert cobs_encode(seq + b"\xff") == b"\xff" + seq + b"\x02\xff"


def test_the_shipped_core_compiles_as_shipped_with_the_built_in_arm_config():
    # The portable core must compile on its own with the strict flags (gcc,
    # -std=c99 -Wall -Wextra -Werror); the shipped inkreach_config.h is the
    # built-in arm's, exactly as `inkreach firmware` writes it.
    import tempfile

    from inkreach.arms import default_arm
    from inkreach.board._build import firmware_dir
    from inkreach.board.firmware_writer import _caution

    cc = shutil.which("cc") or shutil.which("gcc")
    if cc is None:
        pytest.skip("no C compiler")
    fw = firmware_dir()
    with open(os.path.join(fw, "inkreach_config.h"), encoding="utf-8") as fh:
        assert fh.read() == config_header(board_config(default_arm(), "servo", 0.02, None),
                                          _caution())
    out = tempfile.mkdtemp()
    for f in sorted(os.listdir(fw)):
        if f.endswith(".c"):
            r = subprocess.run([cc, "-std=c99", "-Wall", "-Wextra", "-Werror", "-c",
                                os.path.join(fw, f), "-o", os.path.join(out, f + ".o")],
                               capture_output=True, text=True)
            assert r.returncode == 0, (f, r.stderr)
    shutil.rmtree(out)
