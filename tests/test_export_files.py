import os

import pytest

from inkreach.errors import InkreachError
from inkreach.export import SAFETY_TEXT, atomic_write, write_files


def _snapshot(folder):
    """Every entry of a folder with its bytes (hidden temporary files included)."""
    out = {}
    for name in sorted(os.listdir(folder)):
        with open(os.path.join(folder, name), "rb") as fh:
            out[name] = fh.read()
    return out


def test_atomic_write_replaces_the_file_and_leaves_no_temporary(tmp_path):
    p = tmp_path / "a.txt"
    p.write_text("old")
    atomic_write(p, "new text")
    assert p.read_text() == "new text"
    atomic_write(p, b"\x00\x01")
    assert p.read_bytes() == b"\x00\x01"
    assert sorted(os.listdir(tmp_path)) == ["a.txt"]


def test_atomic_write_removes_its_temporary_when_the_rename_fails(tmp_path, monkeypatch):
    p = tmp_path / "a.txt"
    p.write_text("old")

    def boom(src, dst):
        raise OSError("disk trouble")

    monkeypatch.setattr(os, "replace", boom)
    with pytest.raises(OSError):
        atomic_write(p, "new")
    monkeypatch.undo()
    assert _snapshot(tmp_path) == {"a.txt": b"old"}


def test_write_files_writes_every_file_and_the_safety_note(tmp_path):
    out = tmp_path / "new" / "deeper"
    paths = write_files(out, {"plan.json": "{}", "preview.png": b"\x89PNG"})
    snap = _snapshot(out)
    assert snap == {"SAFETY.txt": (SAFETY_TEXT + "\n").encode(), "plan.json": b"{}",
                    "preview.png": b"\x89PNG"}
    assert [os.path.basename(p) for p in paths] == ["plan.json", "preview.png", "SAFETY.txt"]


def test_write_files_failure_on_the_second_rename_leaves_the_folder_exactly_as_before(
        tmp_path, monkeypatch):
    (tmp_path / "notes.txt").write_text("keep me")
    (tmp_path / "plan.json").write_text("previous plan")
    before = _snapshot(tmp_path)
    real = os.replace
    calls = []

    def flaky(src, dst):
        calls.append(os.path.basename(os.fspath(dst)))
        if len(calls) == 2:
            raise OSError("no space left on device")
        return real(src, dst)

    monkeypatch.setattr(os, "replace", flaky)
    with pytest.raises(OSError, match="no space"):
        write_files(tmp_path, {"plan.json": "new plan", "joints.csv": "t_s\n",
                               "preview.svg": "<svg/>"})
    monkeypatch.undo()
    assert calls[:2] == ["plan.json", "joints.csv"]
    assert _snapshot(tmp_path) == before


def test_write_files_failure_while_writing_removes_a_folder_it_created(tmp_path, monkeypatch):
    out = tmp_path / "fresh"
    real = os.replace

    def flaky(src, dst):
        if os.path.basename(os.fspath(dst)) == "b.txt":
            raise OSError("interrupted")
        return real(src, dst)

    monkeypatch.setattr(os, "replace", flaky)
    with pytest.raises(OSError):
        write_files(out, {"a.txt": "A", "b.txt": "B"})
    monkeypatch.undo()
    assert not out.exists()
    assert os.listdir(tmp_path) == []


def test_write_files_refuses_a_file_as_the_folder(tmp_path):
    f = tmp_path / "out"
    f.write_text("I am a file")
    with pytest.raises(InkreachError, match=f"output folder {f} is a file; give a folder path"):
        write_files(f, {"a.txt": "A"})
    assert f.read_text() == "I am a file"


@pytest.mark.skipif(os.name != "posix" or os.geteuid() == 0,
                    reason="permissions are not enforced for this user")
def test_write_files_refuses_a_read_only_folder(tmp_path):
    ro = tmp_path / "ro"
    ro.mkdir()
    ro.chmod(0o500)
    try:
        with pytest.raises(InkreachError, match="not writable"):
            write_files(ro, {"a.txt": "A"})
    finally:
        ro.chmod(0o700)


@pytest.mark.parametrize("name", ["../escape.txt", "sub/a.txt", "", ".."])
def test_write_files_refuses_names_with_a_folder_part(tmp_path, name):
    with pytest.raises(InkreachError, match="plain file name"):
        write_files(tmp_path, {name: "x"})
    assert os.listdir(tmp_path) == []
