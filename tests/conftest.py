"""Shared fixtures. Browser fixtures skip when Chromium is missing, except under CI=true."""

from __future__ import annotations

import os
import shutil

import pytest

CHROMIUM = "/usr/bin/chromium"
CHROME_ARGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
]


def need_chromium():
    if os.path.exists(CHROMIUM) and shutil.which("node"):
        return
    msg = f"browser test needs Chromium at {CHROMIUM} (apt-get install chromium)"
    if os.environ.get("CI") == "true":
        pytest.fail(msg + " — required under CI=true")
    pytest.skip(msg)


@pytest.fixture(scope="session")
def browser():
    need_chromium()
    from playwright.sync_api import sync_playwright

    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=CHROMIUM, args=CHROME_ARGS)
        yield b
        b.close()


@pytest.fixture(scope="session")
def static_server():
    from tests.browser.harness import StaticServer

    s = StaticServer()
    yield s
    s.close()


@pytest.fixture
def show(browser, static_server):
    """show(widget) -> Shown: the widget in a stand-in page; pages are closed after the test."""
    from tests.browser import harness

    pages = []

    def _show(widget, **kw):
        shown = harness.show(browser, static_server, widget, **kw)
        pages.append(shown.page)
        return shown

    yield _show
    for p in pages:
        p.close()


@pytest.fixture(scope="module")
def lab(browser):
    """A real JupyterLab server on 127.0.0.1, one per test module (see tests/browser/jupyter.py)."""
    from tests.browser.jupyter import JupyterServer

    server = JupyterServer()
    yield server
    server.close()
