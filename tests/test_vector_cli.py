"""Line art from the command line and the web API: SVG files, text, captions."""

import json

import pytest

from inkreach.cli import main

SVG = (b'<svg xmlns="http://www.w3.org/2000/svg" width="80mm" height="60mm" '
       b'viewBox="0 0 80 60"><circle cx="40" cy="30" r="20" fill="none"/>'
       b'<text x="0" y="10">label</text></svg>')


@pytest.fixture(scope="module")
def picture(tmp_path_factory):
    from inkreach.cli.demo import still_life
    path = tmp_path_factory.mktemp("pics") / "still.png"
    still_life(200, 150).save(path)
    return path


def test_plan_an_svg_file_prints_one_warning_per_kind(tmp_path, capsys):
    src = tmp_path / "logo.svg"
    src.write_bytes(SVG)
    out = tmp_path / "out"
    assert main(["plan", str(src), "--out", str(out), "--format", "json"]) == 0
    cap = capsys.readouterr()
    warn = [ln for ln in cap.err.splitlines() if "warning" in ln]
    assert len(warn) == 1 and "text elements" in warn[0]
    doc = json.loads((out / "plan.json").read_text())
    assert doc["stats"]["warnings"] == [w.split("warning: ", 1)[1] for w in warn]
    assert doc["stats"]["style"] == "svg"
    # image_to_arm maps user units (px after the viewBox) to arm mm
    assert len(doc["image_to_arm"]) == 2 and len(doc["image_to_arm"][0]) == 3


def test_plan_text_alone_needs_no_picture(tmp_path, capsys):
    out = tmp_path / "out"
    assert main(["plan", "--text", "Hello\\nthere", "--text-height", "8", "--align", "center",
                 "--out", str(out), "-q"]) == 0
    doc = json.loads((out / "plan.json").read_text())
    assert doc["stats"]["style"] == "text"
    assert doc["options"]["text"] == "Hello\nthere"


def test_plan_picture_with_caption(tmp_path, picture):
    out = tmp_path / "out"
    assert main(["plan", str(picture), "--caption", "Greetings from the print shop",
                 "--font", "futuram", "--out", str(out), "-q"]) == 0
    doc = json.loads((out / "plan.json").read_text())
    assert doc["options"]["caption"] == "Greetings from the print shop"


@pytest.mark.parametrize("argv, msg", [
    (["--text", "naïve"], "no letter for 'ï'"),
    (["--text", "x", "--font", "nosuch"], "unknown"),
    ([], "nothing to draw"),
    (["--text", "x", "--caption", "y"], "not both"),
])
def test_bad_text_input_one_line_exit_2_nothing_written(tmp_path, capsys, argv, msg):
    out = tmp_path / "out"
    assert main(["plan", *argv, "--out", str(out), "-q"]) == 2
    err = capsys.readouterr().err
    assert msg in err and err.count("\n") == 1
    assert not out.exists()


# --- the web API ----------------------------------------------------------------

@pytest.fixture(scope="module")
def client(tmp_path_factory):
    from fastapi.testclient import TestClient

    from inkreach.web import create_app
    app = create_app(tmp_root=str(tmp_path_factory.mktemp("web")))
    with TestClient(app) as c:
        yield c


def test_web_accepts_an_svg_upload(client):
    r = client.post("/api/plans", files={"image": ("logo.svg", SVG, "image/svg+xml")},
                    data={"fidelity": "false"})
    assert r.status_code == 200, r.text
    body = r.json()
    assert body["stats"]["style"] == "svg"
    assert any("text elements" in w for w in body["stats"]["warnings"])


def test_web_text_alone_and_caption(client, picture):
    # multipart with text fields only (a part without a file name is text)
    r = client.post("/api/plans", files={"text": (None, "Hello 12"), "fidelity": (None, "false")})
    assert r.status_code == 200, r.text
    assert r.json()["stats"]["style"] == "text"
    r = client.post("/api/plans", files={"image": ("p.png", picture.read_bytes(), "image/png")},
                    data={"caption": "Greetings", "style": "outline"})
    assert r.status_code == 200, r.text


def test_web_refuses_a_hostile_svg_in_one_line(client):
    xxe = (b'<?xml version="1.0"?><!DOCTYPE svg [<!ENTITY x SYSTEM "file:///etc/passwd">]>'
           b'<svg xmlns="http://www.w3.org/2000/svg"><text>&x;</text></svg>')
    r = client.post("/api/plans", files={"image": ("x.svg", xxe, "image/svg+xml")})
    assert r.status_code == 400 and "entit" in r.json()["error"]


def test_plan_svg_with_fill_hatch(tmp_path, capsys):
    src = tmp_path / "badge.svg"
    src.write_bytes(b'<svg xmlns="http://www.w3.org/2000/svg" width="60" height="60">'
                    b'<circle cx="30" cy="30" r="25"/></svg>')
    out = tmp_path / "out"
    assert main(["plan", str(src), "--fill-hatch", "4", "--out", str(out), "-q"]) == 0
    doc = json.loads((out / "plan.json").read_text())
    assert doc["stats"]["strokes"] > 10 and doc["stats"]["warnings"] == []
    assert "outlines" not in capsys.readouterr().err
