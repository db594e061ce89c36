"""The page in a real headless browser: nothing broken before a plan, the drawing as
inked shown first, a toggle to the drawing order, the likeness worded as the previews."""

import httpx
import pytest

from test_web_api import _picture, _png
from test_web_browser import _wait_until_loaded, browser, server  # noqa: F401  (fixtures)

pytestmark = pytest.mark.browser


def test_page_shows_the_inked_drawing_first_and_toggles_to_the_order(browser, server,  # noqa: F811
                                                                     tmp_path):
    pic = tmp_path / "circle.png"
    pic.write_bytes(_png(_picture()))
    with httpx.Client(base_url=server, timeout=120) as c:
        api = c.post("/api/plans", data={"style": "centerline"},
                     files={"image": ("circle.png", pic.read_bytes(), "image/png")}).json()
    page = browser.new_page(viewport={"width": 1280, "height": 1000})
    errors = []
    page.on("pageerror", lambda e: errors.append(str(e)))
    page.goto(server)
    page.wait_for_selector("body[data-ready='1']")
    # before a plan: no picture frames, no download links at all
    assert page.locator("img:visible").count() == 0
    assert page.locator("#simulated-png").is_hidden() and page.locator("#downloads").is_hidden()
    assert page.locator("#ink-empty").is_visible()
    # options read as labels with units, the identifier beside them
    page.select_option("#style", "hatch")
    label = page.inner_text("label[for='opt-spacing']")
    assert label.startswith("Gap between lines (px)") and "spacing" in label
    page.select_option("#style", "centerline")
    page.set_input_files("#file", str(pic))
    page.click("#plan-button")
    page.wait_for_selector("#figures [data-stat=strokes][data-value]", timeout=120_000)
    _wait_until_loaded(page, "#simulated-png")
    assert page.locator("#simulated-png").is_visible()
    assert page.locator("#preview").is_hidden()
    assert page.inner_text("#figures [data-stat=fidelity]").strip() == api["likeness"]
    page.click("#view-order")
    assert page.locator("#preview").is_visible() and page.locator("#simulated-png").is_hidden()
    page.click("#view-ink")
    assert page.locator("#simulated-png").is_visible()
    assert not errors, errors


def test_page_plans_text_alone_from_its_text_field(browser, server):  # noqa: F811
    # No file chosen: the text field is drawn alone in a single-stroke font.
    page = browser.new_page(viewport={"width": 1280, "height": 1000})
    errors = []
    page.on("pageerror", lambda e: errors.append(str(e)))
    page.goto(server)
    page.wait_for_selector("body[data-ready='1']")
    page.fill("#text", "Hello")
    page.click("#plan-button")
    page.wait_for_selector("#figures [data-stat=strokes][data-value]", timeout=120_000)
    _wait_until_loaded(page, "#simulated-png")
    assert page.locator("#simulated-png").is_visible()
    strokes = int(page.get_attribute("#figures [data-stat=strokes]", "data-value"))
    # the Hershey letters of "Hello" are several strokes (H alone is three)
    assert strokes >= 3
    assert not errors, errors
