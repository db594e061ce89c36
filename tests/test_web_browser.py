"""The page in a real headless browser: choose a picture, plan, read the figures, download."""

import json
import os

import httpx
import pytest

from test_web_api import JOINTS_HEADER, _picture, _png
from test_web_server import start_server, stop_server

pytestmark = pytest.mark.browser

CHROMIUM = "/usr/bin/chromium"
ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking",
        "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"]
ARTIFACTS = os.path.join(os.path.dirname(os.path.abspath(__file__)), "_artifacts")


@pytest.fixture(scope="module")
def browser():
    if not os.path.exists(CHROMIUM):
        pytest.skip(f"{CHROMIUM} is missing; install Debian's chromium to run the browser test")
    sync_api = pytest.importorskip("playwright.sync_api")
    with sync_api.sync_playwright() as p:
        try:
            b = p.chromium.launch(executable_path=CHROMIUM, headless=True, args=ARGS)
        except Exception as exc:  # the binary is there but cannot start here
            pytest.skip(f"{CHROMIUM} cannot launch: {str(exc).splitlines()[0]}")
        yield b
        b.close()


def _wait_until_loaded(page, selector, timeout=60_000):
    """Wait until the image at ``selector`` has loaded.

    Polled by Playwright's own assertion on the element's ``complete``
    property, not by a JavaScript string evaluated in the page: the page's
    Content-Security-Policy (script-src 'self') refuses string evaluation,
    and ``wait_for_function`` with a string fails under it whenever the
    first check comes too early and it has to poll in the page.
    """
    from playwright.sync_api import expect

    expect(page.locator(selector)).to_have_js_property("complete", True, timeout=timeout)


@pytest.fixture(scope="module")
def server():
    proc, url = start_server()
    yield url
    stop_server(proc)


def test_page_plans_a_picture_and_downloads_joints(browser, server, tmp_path):
    pic = tmp_path / "circle.png"
    pic.write_bytes(_png(_picture()))
    # the same request through the API, for the figures to compare with
    with httpx.Client(base_url=server, timeout=120) as c:
        api = c.post("/api/plans", data={"style": "centerline"},
                     files={"image": ("circle.png", pic.read_bytes(), "image/png")}).json()

    page = browser.new_page(viewport={"width": 1280, "height": 1000}, accept_downloads=True)
    outside = []
    page.on("request", lambda req: outside.append(req.url)
            if not req.url.startswith(server) and not req.url.startswith(("blob:", "data:"))
            else None)
    errors = []
    page.on("pageerror", lambda e: errors.append(str(e)))
    page.goto(server)
    page.wait_for_selector("body[data-ready='1']")
    assert page.locator("#error").is_hidden()
    page.set_input_files("#file", str(pic))
    page.select_option("#style", "centerline")
    page.click("#plan-button")
    page.wait_for_selector("#figures [data-stat=strokes][data-value]", timeout=120_000)
    assert page.locator("#error").is_hidden(), page.locator("#error").inner_text()

    for key in ("strokes", "pen_lifts", "estimated_s", "pen_down_mm", "pen_up_mm",
                "min_conditioning"):
        shown = page.get_attribute(f"#figures [data-stat={key}]", "data-value")
        assert json.loads(shown) == api["stats"][key], key
    assert page.inner_text("#figures [data-stat=strokes]").strip() == f"{api['stats']['strokes']:,}"

    with page.expect_download() as dl:
        page.click("#download-joints")
    path = dl.value.path()
    with open(path, encoding="utf-8") as fh:
        assert fh.readline().strip() == JOINTS_HEADER
    assert dl.value.suggested_filename.endswith("joints.csv")

    _wait_until_loaded(page, "#simulated-png")
    os.makedirs(ARTIFACTS, exist_ok=True)
    page.screenshot(path=os.path.join(ARTIFACTS, "web.png"), full_page=True)
    assert not errors, errors
    assert not outside, outside


def test_page_shows_the_api_error_in_the_banner(browser, server, tmp_path):
    txt = tmp_path / "notes.png"
    txt.write_bytes(b"not a picture at all\n")
    page = browser.new_page()
    page.goto(server)
    page.wait_for_selector("body[data-ready='1']")
    page.set_input_files("#file", str(txt))
    page.click("#plan-button")
    page.wait_for_selector("#error:not([hidden])", timeout=60_000)
    assert "picture" in page.inner_text("#error")
    page.set_input_files("#file", str(tmp_path / "notes.png"))
    assert page.is_enabled("#plan-button")
