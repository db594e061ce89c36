"""C unit tests of every board module, compiled with the host compiler and run."""

import subprocess

import pytest

from _board import Core, build_test


@pytest.mark.parametrize("name, modules", [
    ("test_crc16", ["crc16"]),          # catalogue check value 0x29B1 (Greg Cook's catalogue)
    ("test_cobs", ["cobs"]),            # Cheshire & Baker 1999 examples
    ("test_frame", ["frame", "cobs", "crc16"]),
    ("test_ring", ["ring"]),
    ("test_output", ["output"]),
    ("test_check", ["check", "output"]),
])
@pytest.mark.parametrize("drive", ["servo", "stepper"])
def test_c_module_passes_its_unit_test(name, modules, drive):
    exe = build_test(name, modules, drive=drive)
    res = subprocess.run([exe], capture_output=True, text=True, timeout=60)
    assert res.returncode == 0, res.stderr


def test_core_state_fits_an_8_bit_board():
    # Our bound: an ATmega328P has 2048 bytes of RAM; the Arduino serial buffers
    # take about 160 and the stack needs a few hundred, so the core gets 1 KB.
    core = Core()
    core.script.append("s")
    res = subprocess.run([core.exe], input="s\n", capture_output=True, text=True, timeout=30)
    size = int(res.stdout.split()[1])
    assert size <= 1024
