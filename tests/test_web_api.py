"""The web API: good plans, hostile uploads, limits and clean-up."""

import io
import json
import os
import threading

import numpy as np
import pytest
from fastapi.testclient import TestClient
from PIL import Image, ImageDraw

from inkreach.errors import InkreachError
from inkreach.web import create_app, decimate_strokes, parse_options, region_outline

# The stats fields and joints.csv header are fixed by the README (output files, figures).
README_STATS = ("strokes", "pen_lifts", "pen_down_mm", "pen_up_mm", "estimated_s",
                "min_conditioning")
JOINTS_HEADER = "t_s,theta1_deg,theta2_deg,pen,x_mm,y_mm"


# ---- a quick stand-in planner, for tests of the store and the queue ----------
class _FakePlan:
    def __init__(self, strokes, arm, wmap, style):
        self.strokes, self.arm, self.workspace, self.style = strokes, arm, wmap, style
        lengths = [float(np.linalg.norm(np.diff(s, axis=0), axis=1).sum()) for s in strokes]
        ups = [float(np.linalg.norm(b[0] - a[-1])) for a, b in zip(strokes, strokes[1:])]
        self.stats = {"style": style, "strokes": len(strokes), "pen_lifts": len(strokes) - 1,
                      "pen_down_mm": round(sum(lengths), 3), "pen_up_mm": round(sum(ups), 3),
                      "estimated_s": 12.5, "min_conditioning": 0.41,
                      "drawing_mm": [60.0, 48.0]}

    def files(self):
        t = np.arange(5) * 0.02
        rows = "\n".join(f"{ti:.3f},90.0,90.0,{i % 2},0.0,150.0" for i, ti in enumerate(t))
        return {"plan.json": json.dumps({"strokes": [s.tolist() for s in self.strokes],
                                         "stats": self.stats}),
                "joints.csv": JOINTS_HEADER + "\n" + rows + "\n",
                "preview.svg": "<svg xmlns='http://www.w3.org/2000/svg'/>",
                "preview.png": _png(Image.new("RGB", (20, 20), "white")),
                "simulated.png": _png(Image.new("RGB", (20, 20), "white")),
                "servo.csv": "t_s,pulse1_us,pulse2_us,pen\n",
                "plan.h": "/* plan */\n", "SAFETY.txt": "keep hands clear\n"}


_WMAP = {}


def fake_plan(image, arm=None, style="outline", progress=None, **options):
    """Stand-in with the real planner's signature: a circle and a line, at once."""
    from inkreach.arms import default_arm, workspace_map
    arm = arm or default_arm()
    if arm.name not in _WMAP:
        _WMAP[arm.name] = workspace_map(arm)
    if progress:
        progress("trace", 0, 1)
    a = np.linspace(0, 2 * np.pi, 200)
    strokes = [np.c_[20 * np.cos(a), 150 + 20 * np.sin(a)], np.array([[30.0, 130], [50, 170]])]
    return _FakePlan(strokes, arm, _WMAP[arm.name], style)


# ---- helpers ---------------------------------------------------------------
def _png(im):
    buf = io.BytesIO()
    im.save(buf, format="PNG")
    return buf.getvalue()


def _picture(size=(200, 160)):
    """An invented test picture: a drawn circle and a line, black on white."""
    im = Image.new("L", size, 255)
    d = ImageDraw.Draw(im)
    d.ellipse((30, 30, 130, 130), outline=0, width=4)
    d.line((145, 20, 185, 140), fill=0, width=4)
    return im


@pytest.fixture(scope="module")
def png_bytes():
    return _png(_picture())


@pytest.fixture()
def client(tmp_path):
    app = create_app(tmp_root=str(tmp_path / "root"), max_upload_bytes=2_000_000)
    with TestClient(app) as c:
        c.app_ref = app
        yield c


def _post(client, data, name="circle.png", ctype="image/png", **fields):
    fields.setdefault("style", "centerline")
    return client.post("/api/plans", files={"image": (name, data, ctype)}, data=fields)


# ---- good plans --------------------------------------------------------------
def test_good_plan_returns_design_stats_and_a_joints_csv(client, png_bytes):
    r = _post(client, png_bytes)
    assert r.status_code == 200, r.text
    body = r.json()
    for k in README_STATS:
        assert k in body["stats"]
    assert body["stats"]["strokes"] >= 1
    assert body["files"]["joints.csv"] == f"/api/plans/{body['id']}/files/joints.csv"
    f = client.get(body["files"]["joints.csv"])
    assert f.status_code == 200
    assert f.headers["content-type"].startswith("text/csv")
    assert "attachment" in f.headers["content-disposition"]
    assert f.text.splitlines()[0] == JOINTS_HEADER
    # the stats are those in plan.json
    pj = client.get(body["files"]["plan.json"]).json()
    assert pj["stats"] == body["stats"]


def test_good_plan_carries_small_preview_data(client, png_bytes):
    body = _post(client, png_bytes).json()
    assert len(body["strokes"]) >= 1
    assert all(len(p) == 2 for s in body["strokes"] for p in s)
    assert body["workspace"]["usable"], "the usable-region outline is missing"
    assert len(json.dumps(body)) < 600_000


def test_plan_files_have_their_content_types(client, png_bytes):
    body = _post(client, png_bytes).json()
    png = client.get(body["files"]["preview.png"] + "?inline=1")
    assert png.headers["content-type"] == "image/png"
    assert png.headers["content-disposition"].startswith("inline")
    assert png.content[:8] == b"\x89PNG\r\n\x1a\n"
    svg = client.get(body["files"]["preview.svg"])
    assert svg.headers["content-type"].startswith("image/svg+xml")


def test_options_are_passed_to_the_planner_and_unknown_ones_refused(client, png_bytes):
    r = _post(client, png_bytes, frobnicate="3")
    assert r.status_code == 400
    assert "frobnicate" in r.json()["error"]
    r = _post(client, png_bytes, size="50")
    assert r.status_code == 200, r.text


def test_progress_of_a_plan_can_be_followed(tmp_path, png_bytes):
    client = TestClient(create_app(tmp_root=str(tmp_path), planner=fake_plan))
    token = "page-0123456789"
    assert client.get(f"/api/progress/{token}").json()["stage"] == "waiting"
    r = client.post("/api/plans", data={"style": "centerline"}, headers={"X-Progress-Id": token},
                    files={"image": ("a.png", png_bytes, "image/png")})
    assert r.status_code == 200
    assert client.get(f"/api/progress/{token}").json()["stage"] == "done"
    assert client.get("/api/progress/bad").status_code == 404


def test_built_in_arm_by_name_is_used(client, png_bytes):
    r = _post(client, png_bytes, arm="wide")
    assert r.status_code == 200, r.text


def test_arm_file_text_is_accepted_as_a_field_or_a_file(client, png_bytes):
    from inkreach.arms.armfile import builtin_arm_text
    text = builtin_arm_text("serial")
    assert _post(client, png_bytes, arm=text).status_code == 200
    r = client.post("/api/plans", data={"style": "centerline"},
                    files={"image": ("a.png", png_bytes, "image/png"),
                           "arm": ("my arm.toml", text.encode(), "application/toml")})
    assert r.status_code == 200, r.text


# ---- hostile input -------------------------------------------------------------
def test_oversize_body_gets_413_from_its_content_length(tmp_path):
    app = create_app(tmp_root=str(tmp_path), max_upload_bytes=10_000)
    with TestClient(app) as c:
        r = _post(c, os.urandom(20_000))
        assert r.status_code == 413
        assert "error" in r.json()


def test_oversize_chunked_body_gets_413_while_reading(tmp_path, png_bytes):
    app = create_app(tmp_root=str(tmp_path), max_upload_bytes=10_000)
    boundary = "b0und"
    head = (f"--{boundary}\r\nContent-Disposition: form-data; name=\"image\"; "
            f"filename=\"a.png\"\r\nContent-Type: image/png\r\n\r\n").encode()

    def chunks():  # no Content-Length: the server must count
        yield head
        for _ in range(10):
            yield b"\0" * 4096
        yield f"\r\n--{boundary}--\r\n".encode()

    with TestClient(app) as c:
        r = c.post("/api/plans", content=chunks(),
                   headers={"content-type": f"multipart/form-data; boundary={boundary}"})
        assert r.status_code == 413
        assert "larger" in r.json()["error"]


def test_text_file_as_picture_gets_a_json_error(client, png_bytes):
    r = _post(client, b"just some words\n", name="notes.txt", ctype="text/plain")
    assert r.status_code == 415 and r.json()["error"]
    # the same text claiming to be a PNG is found out from its content
    r = _post(client, b"just some words\n", name="notes.png", ctype="image/png")
    assert r.status_code == 415 and "picture" in r.json()["error"]


def test_damaged_picture_gets_a_json_error(client, png_bytes):
    r = _post(client, png_bytes[: len(png_bytes) // 2])
    assert 400 <= r.status_code < 500
    assert r.json()["error"]


def test_path_in_file_name_is_never_used(tmp_path, png_bytes):
    outer = tmp_path / "outer"
    root = outer / "root"
    app = create_app(tmp_root=str(root))
    before = sorted(os.listdir(outer))
    with TestClient(app) as c:
        r = _post(c, png_bytes, name="../../x.png")
        assert r.status_code == 200, r.text
        r = _post(c, png_bytes, name="/etc/passwd")
        assert r.status_code == 200, r.text
        assert sorted(os.listdir(outer)) == before == ["root"]
        assert os.listdir(root) == [os.path.basename(app.state.store.root)]
    found = [os.path.join(d, f) for d, _, fs in os.walk(tmp_path) for f in fs]
    assert not any(os.path.basename(f) in ("x.png", "passwd") for f in found)


def test_bad_arm_toml_gets_4xx_with_the_arm_message(client, png_bytes):
    r = _post(client, png_bytes, arm='name = "x"\nkind = "three-bar"\n')
    assert 400 <= r.status_code < 500
    assert "arm" in r.json()["error"].lower()
    r = _post(client, png_bytes, arm="this is [not toml = ")
    assert 400 <= r.status_code < 500 and r.json()["error"]


def test_arm_name_is_never_read_as_a_server_path(client, png_bytes):
    r = _post(client, png_bytes, arm="/etc/hostname")
    assert r.status_code == 400
    assert "built-in" in r.json()["error"]


def test_unknown_style_gets_4xx(client, png_bytes):
    r = _post(client, png_bytes, style="wavy")
    assert 400 <= r.status_code < 500
    assert "wavy" in r.json()["error"]


def test_cut_off_upload_gets_4xx_and_the_server_keeps_serving(client, png_bytes):
    boundary = "cutcut"
    body = (f"--{boundary}\r\nContent-Disposition: form-data; name=\"image\"; "
            f"filename=\"a.png\"\r\nContent-Type: image/png\r\n\r\n").encode() + png_bytes[:300]
    hdr = {"content-type": f"multipart/form-data; boundary={boundary}"}
    # the closing boundary never came
    r = client.post("/api/plans", content=body, headers=hdr)
    assert 400 <= r.status_code < 500 and r.json()["error"]
    # fewer bytes than the Content-Length promised
    r = client.post("/api/plans", content=body,
                    headers={**hdr, "content-length": str(len(body) + 5000)})
    assert r.status_code == 400 and "cut off" in r.json()["error"]
    assert _post(client, png_bytes).status_code == 200


def test_wrong_request_content_type_gets_415(client, png_bytes):
    r = client.post("/api/plans", content=png_bytes, headers={"content-type": "image/png"})
    assert r.status_code == 415 and r.json()["error"]
    r = client.post("/api/plans", json={"image": "x"})
    assert r.status_code == 415


def test_missing_picture_gets_400(client):
    r = client.post("/api/plans", data={"style": "outline"},
                    files={"other": ("a.txt", b"x", "text/plain")})
    assert r.status_code == 400 and "image" in r.json()["error"]


def test_too_many_pixels_is_refused(tmp_path, png_bytes):
    app = create_app(tmp_root=str(tmp_path), max_pixels=10_000)
    with TestClient(app) as c:
        r = _post(c, png_bytes)
        assert r.status_code == 413 and "pixels" in r.json()["error"]


def test_refused_option_and_bounds(client, png_bytes):
    r = _post(client, png_bytes, pen_px="3")
    assert r.status_code == 400 and "width_mm" in r.json()["error"]
    r = _post(client, png_bytes, max_side="100000")
    assert r.status_code == 400


def test_unexpected_error_gets_500_json_without_traceback(tmp_path, png_bytes):
    def broken(*a, **k):
        raise RuntimeError("deep failure\nTraceback (most recent call last): secret")

    app = create_app(tmp_root=str(tmp_path), planner=broken)
    with TestClient(app, raise_server_exceptions=False) as c:
        r = _post(c, png_bytes)
        assert r.status_code == 500
        msg = r.json()["error"]
        assert "\n" not in msg and "Traceback" not in msg and "secret" not in msg
        assert c.get("/api/arms").status_code == 200


def test_busy_server_answers_503_and_recovers(tmp_path, png_bytes):
    release, started = threading.Event(), threading.Event()

    def slow(*a, **k):
        started.set()
        release.wait(20)
        return fake_plan(*a, **k)

    app = create_app(tmp_root=str(tmp_path), planner=slow, workers=1, queue_limit=0)
    with TestClient(app) as c:
        out = {}
        t = threading.Thread(target=lambda: out.setdefault("r", _post(c, png_bytes)))
        t.start()
        assert started.wait(20)
        r = _post(c, png_bytes)
        assert r.status_code == 503 and r.headers.get("retry-after")
        release.set()
        t.join(20)
        assert out["r"].status_code == 200
        assert _post(c, png_bytes).status_code == 200


def test_unknown_plan_or_file_gets_404_json(client, png_bytes):
    body = _post(client, png_bytes).json()
    assert client.get("/api/plans/0123456789abcdef/files/joints.csv").status_code == 404
    for name in ("nope.csv", "..%2F..%2Fetc%2Fpasswd", "%2E%2E"):
        r = client.get(f"/api/plans/{body['id']}/files/{name}")
        assert r.status_code == 404 and r.json()["error"]
    assert client.get("/api/nothing").json()["error"]


def test_oldest_plans_are_evicted(tmp_path, png_bytes):
    # the store's behaviour, not the planner's: the quick stand-in is enough
    app = create_app(tmp_root=str(tmp_path), planner=fake_plan, keep=2)
    with TestClient(app) as c:
        ids = [_post(c, png_bytes).json()["id"] for _ in range(3)]
        assert c.get(f"/api/plans/{ids[0]}/files/joints.csv").status_code == 404
        assert c.get(f"/api/plans/{ids[2]}/files/joints.csv").status_code == 200
        assert len(os.listdir(app.state.store.root)) == 2


def test_temp_folder_is_removed_on_shutdown(tmp_path, png_bytes):
    app = create_app(tmp_root=str(tmp_path), planner=fake_plan)
    root = app.state.store.root
    with TestClient(app) as c:
        assert _post(c, png_bytes).status_code == 200
        assert os.path.isdir(root)
    assert not os.path.exists(root)


# ---- the page and the lists -------------------------------------------------------
def test_page_has_the_stable_ids_and_fetches_nothing_from_outside(client):
    html = client.get("/").text
    for ident in ("drop", "file", "style", "arm", "plan-button", "figures",
                  "download-joints", "error"):
        assert f'id="{ident}"' in html
    for name in ("index.html", "app.js", "style.css"):
        r = client.get(f"/static/{name}") if name != "index.html" else client.get("/")
        assert r.status_code == 200
        assert "https://" not in r.text and "http://" not in r.text.replace(
            "http://www.w3.org/2000/svg", "")
    assert "default-src 'self'" in client.get("/").headers["content-security-policy"]
    assert client.get("/static/../app.py").status_code == 404


def test_arms_and_styles_are_listed(client):
    from inkreach.arms import example_arms
    arms = client.get("/api/arms").json()
    assert [a["name"] for a in arms["arms"]] == list(example_arms())
    assert all("kind" in a["toml"] for a in arms["arms"])
    styles = client.get("/api/styles").json()
    names = [s["name"] for s in styles["styles"]]
    for s in ("outline", "centerline", "hatch", "stipple", "contour"):
        assert s in names
    assert {o["name"] for o in styles["common"]} >= {"size", "margin"}


# ---- the small pure helpers ------------------------------------------------------
def test_form_values_parse_to_numbers_words_and_lists():
    assert parse_options([("detail", "0.7"), ("levels", "8"), ("mode", "line"),
                          ("paper", "0,0,100,80"), ("blur", "  ")]) == {
        "detail": 0.7, "levels": 8, "mode": "line", "paper": [0, 0, 100, 80]}
    with pytest.raises(InkreachError):
        parse_options([("Bad Name", "1")])
    with pytest.raises(InkreachError):
        parse_options([("detail", "nan")])


def test_decimation_keeps_the_budget_and_the_ends():
    rng = np.random.default_rng(0)
    strokes = [np.cumsum(rng.normal(size=(300, 2)), axis=0) for _ in range(20)]
    out, truncated = decimate_strokes(strokes, max_points=500)
    assert sum(len(s) for s in out) <= 500 and not truncated
    for a, b in zip(out, strokes):
        assert np.allclose(a[0], b[0], atol=0.01) and np.allclose(a[-1], b[-1], atol=0.01)
    dots = [np.array([[i, 0.0]]) for i in range(3000)]
    out, truncated = decimate_strokes(dots, max_points=1000)
    assert len(out) == 1000 and truncated


def test_region_outline_of_a_disc_has_its_radius():
    x = y = np.arange(-50.0, 50.5, 1.0)
    X, Y = np.meshgrid(x, y)
    polys = region_outline(X ** 2 + Y ** 2 <= 30 ** 2, x, y)
    r = np.hypot(*np.asarray(polys[0]).T)
    assert len(polys) == 1 and np.all(np.abs(r - 30) < 1.5)
