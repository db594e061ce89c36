"""Single-stroke text, checked against the Hershey font data itself.

The font data is read here independently of both inkreach and the
Hershey-Fonts package's parser: the package's compressed archive is
unpacked and each glyph line decoded by the Hershey format as published
with the fonts (A. V. Hershey, NWL report 2101, 1967; the ".jhf" layout:
columns 1-5 the glyph number, 6-8 the vertex count including the
left/right pair, then the left and right side bearings, then coordinate
pairs, each a letter minus 'R', with " R" lifting the pen).
"""

import base64
import io
import json
import tarfile

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import inkreach
from inkreach import InkreachError
from inkreach.vector import text_strokes


def font_lines(name):
    from HersheyFonts import HersheyFonts
    raw = base64.b64decode(getattr(HersheyFonts, "_HersheyFonts__compressed_fonts_base64"))
    with tarfile.open(fileobj=io.BytesIO(raw)) as tar:
        return tar.extractfile(name).read().decode("utf-8").splitlines()


def decode(line):
    """One glyph line -> (left, right, strokes) in font units."""
    nverts = int(line[5:8])
    val = lambda c: ord(c) - ord("R")                       # noqa: E731
    left, right = val(line[8]), val(line[9])
    body = line[10:]
    pairs = [body[i:i + 2] for i in range(0, len(body), 2)]
    assert len(pairs) + 1 == nverts                          # the format's own count
    strokes, cur = [], []
    for pr in pairs:
        if pr == " R":
            if cur:
                strokes.append(cur)
            cur = []
        else:
            cur.append((val(pr[0]), val(pr[1])))
    if cur:
        strokes.append(cur)
    return left, right, strokes


def glyph_table(name):
    """Character -> (left, right, strokes): glyph lines in order from ASCII 32."""
    lines = [ln.rstrip("\n") for ln in font_lines(name) if ln.strip() and ln[0] != "#"]
    return {chr(32 + i): decode(ln.rstrip()) for i, ln in enumerate(lines)}


@pytest.fixture(scope="module")
def futural():
    return glyph_table("futural")


CAP, BASE = -12, 9            # futural's cap and base lines (font units), from memory,
                              # checked below against the letter H's stems


def test_cap_and_base_lines_from_the_letter_H(futural):
    _, _, strokes = futural["H"]
    ys = sorted({y for s in strokes for _, y in s})
    assert ys[0] == CAP and ys[-1] == BASE


@pytest.mark.parametrize("word", ["A", "Hershey", "g@8?", "Wave"])
def test_glyph_strokes_and_advances_match_the_font_data(futural, word):
    k = 1.0                                        # height 21 mm: one unit per mm
    t = text_strokes(word, height=(BASE - CAP) * k)
    want, x = [], 0.0
    for ch in word:
        left, right, strokes = futural[ch]
        want += [np.array([(x + px - left, py - BASE) for px, py in s], float) for s in strokes]
        x += right - left                          # the advance: right minus left bearing
    got = [s for s in t.strokes]
    assert len(got) == len(want)
    for g, w in zip(got, want):
        if len(w) == 1:
            w = np.vstack([w, w])                  # a dot is drawn as a zero-length stroke
        np.testing.assert_allclose(g, w * k, atol=1e-12)
    assert t.size[0] == pytest.approx(x * k)


def test_letter_height_in_mm_scales_the_font():
    t = text_strokes("H", height=7.0)
    pts = np.concatenate(t.strokes)
    assert np.ptp(pts[:, 1]) == pytest.approx(7.0)          # cap line to base line


@pytest.mark.parametrize("font, ch", [("scripts", "a"), ("gothiceng", "Q"), ("timesr", "&")])
def test_other_fonts_match_their_data(font, ch):
    left, right, strokes = glyph_table(font)[ch]
    t = text_strokes(ch, font=font, height=10.0)
    k = t.size[0] / (right - left)                 # mm per font unit, from the advance
    assert len(t.strokes) == len(strokes)
    for g, w in zip(t.strokes, strokes):
        w = np.array(w, float)
        if len(w) == 1:
            w = np.vstack([w, w])
        np.testing.assert_allclose(g[:, 0], (w[:, 0] - left) * k, atol=1e-9)
        dy = g[:, 1] - w[:, 1] * k                 # the same baseline shift throughout
        np.testing.assert_allclose(dy, dy[0], atol=1e-9)


def test_missing_characters_are_named():
    with pytest.raises(InkreachError, match=r"'é'.*'€'|'€'.*'é'") as e:
        text_strokes("Café 5€")
    assert "\n" not in str(e.value)


def test_unknown_font_and_empty_text_are_refused():
    with pytest.raises(InkreachError, match="unknown"):
        text_strokes("x", font="no such font")
    with pytest.raises(InkreachError, match="empty"):
        text_strokes("   ")


@pytest.mark.parametrize("align", ["left", "center", "right"])
def test_alignment_of_lines(futural, align):
    t = text_strokes("I\nIII", height=21.0, align=align)
    left, right, _ = futural["I"]
    adv = right - left
    first = t.strokes[0][:, 0].mean()              # the stem of the first line's I
    stem = -left                                   # its x inside the glyph
    shift = {"left": 0.0, "center": adv, "right": 2 * adv}[align]
    assert first == pytest.approx(stem + shift)
    # the second line's baseline is one line pitch lower
    assert t.strokes[-1][:, 1].max() > t.strokes[0][:, 1].max()


@settings(max_examples=25, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow])
@given(st.text(alphabet=st.characters(min_codepoint=33, max_codepoint=126), min_size=1,
               max_size=12))
def test_block_width_is_the_sum_of_advances(futural, word):
    t = text_strokes(word, height=BASE - CAP)
    assert t.size[0] == pytest.approx(sum(futural[c][1] - futural[c][0] for c in word))


# --- text through the whole planner -----------------------------------------

def test_a_plan_of_text_passes_the_stream_check(tmp_path):
    import tomllib
    import sys
    sys.path.insert(0, __file__.rsplit("/", 1)[0])
    from _independent import check_joints

    from inkreach.arms import arm_to_toml
    p = inkreach.plan(None, text="Hi there\nprint shop", fidelity=False)
    r = inkreach.check_stream(p.stream, p.arm, strokes=p.strokes,
                              chord_tol=p.options["chord_tol"])
    assert r.max_deviation_mm <= p.options["chord_tol"]
    files = p.files()
    fig = check_joints(files["joints.csv"], tomllib.loads(arm_to_toml(p.arm)))
    assert fig["in_limits"] and fig["max_speed"] <= fig["speed_limit"] * (1 + 1e-4)
    assert fig["max_accel"] <= fig["accel_limit"] * (1 + 1e-4)
    assert p.stats["style"] == "text"
    assert json.loads(files["plan.json"])["stats"]["warnings"] == []


def test_text_height_fixes_the_letter_size_on_the_arm(futural):
    p = inkreach.plan(None, text="HI", text_height=15.0, fidelity=False, rotations=[0.0])
    # units are mm already, so the placement scale is 1
    assert p.placement.scale == pytest.approx(1.0)
    # the H's stems run cap line to base line: 15 mm long on the paper
    longest = max(np.hypot(*(s[-1] - s[0])) for s in p.strokes if len(s) == 2)
    assert longest == pytest.approx(15.0, abs=1e-6)


def test_caption_is_placed_under_the_picture_together(tmp_path):
    from inkreach.cli.demo import still_life
    path = tmp_path / "still.png"
    still_life(240, 180).save(path)
    plain = inkreach.plan(path, style="outline", fidelity=False, rotations=[0.0])
    p = inkreach.plan(path, style="outline", caption="Greetings", fidelity=False,
                      rotations=[0.0])
    M = p.image_to_arm
    inv = np.linalg.inv(M[:, :2])
    rows = [((s - M[:, 2]) @ inv.T)[:, 1] for s in p.strokes]
    # some strokes lie wholly below the picture's last row (the caption) ...
    below = [r for r in rows if r.min() > 180]
    assert len(below) >= len("Greetings") - 1
    # ... and the picture and caption were placed as one drawing
    assert p.stats["strokes"] > plain.stats["strokes"]
    assert p.image_size[1] > 180
