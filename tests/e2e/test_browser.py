"""The page at / in a real headless Chromium (Debian's, driven by playwright's Python
package with the system browser: no browser download). Paste a column, press the
button, wait for the verdict and the plots, take a screenshot."""

from __future__ import annotations

import json
import os
import shutil
import subprocess

import pytest

from .servers import ROOT, start_gunicorn, stop

pytestmark = pytest.mark.e2e
CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                 "--disable-background-networking", "--disable-component-update", "--disable-sync"]


def _chromium() -> str | None:
    path = shutil.which("chromium")
    if path:
        return path
    if os.name == "posix" and os.geteuid() == 0 and shutil.which("apt-get"):
        env = {**os.environ, "DEBIAN_FRONTEND": "noninteractive"}
        subprocess.run(["apt-get", "update", "-q"], capture_output=True, env=env, timeout=600)
        subprocess.run(["apt-get", "install", "-y", "-q", "chromium", "chromium-driver"], capture_output=True, env=env, timeout=900)
    return shutil.which("chromium")


@pytest.fixture(scope="module")
def browser():
    path = _chromium()
    if path is None:
        pytest.skip("Chromium is not installed and cannot be installed here")
    from playwright.sync_api import sync_playwright

    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=path, args=CHROMIUM_ARGS)
        yield b
        b.close()


@pytest.fixture(scope="module")
def server(tmp_path_factory):
    base, proc = start_gunicorn(tmp_path_factory.mktemp("browser") / "server.log")
    yield base
    stop(proc)


def test_paste_a_column_and_read_the_verdict(browser, server, tmp_path):
    context = browser.new_context(viewport={"width": 1200, "height": 1100}, user_agent="shapegauge-browser-test")
    page = context.new_page()
    outside, errors = [], []
    page.on("request", lambda r: None if r.url.startswith(server) else outside.append(r.url))
    page.on("pageerror", lambda e: errors.append(str(e)))
    page.goto(server + "/")
    demo = json.loads((ROOT / "service" / "api" / "examples" / "demo.json").read_text())["values"]
    column = "\n".join("" if v is None else str(v) for v in demo) + "\n#N/A\n"
    page.fill("#cells", column)
    page.click("#go")
    page.wait_for_selector("#sentence[data-label]", timeout=20_000)
    assert page.get_attribute("#sentence", "data-label") == "skewed"
    assert "right-skewed" in page.inner_text("#sentence")
    numbers = page.inner_text("#numbers")
    assert "58 (3 missing dropped)" in numbers and "shapiro wilk" in numbers
    page.wait_for_selector("#plots svg", timeout=20_000)
    assert page.locator("#plots svg title").first.text_content().startswith("Histogram")
    shot = tmp_path / "page.png"
    page.screenshot(path=str(shot), full_page=True)
    assert shot.stat().st_size > 10_000
    assert errors == [] and outside == []
    context.close()


def test_a_bad_column_shows_where_it_is_wrong(browser, server):
    page = browser.new_page()
    page.goto(server + "/")
    page.fill("#cells", "1.2\n3.4\nabc\n5.6\n")
    page.click("#go")
    page.wait_for_function("document.getElementById('error').textContent.length > 0", timeout=20_000)
    assert "line 3" in page.inner_text("#error")
    page.close()
