"""A Jupyter Notebook 7 server (``jupyter notebook``) on 127.0.0.1, and a notebook page driven by Playwright.

Notebook 7 is built from JupyterLab's components, so cells, editors, prompts and outputs carry the same
``jp-`` classes; what differs is the URL (``/notebooks/NAME.ipynb``), the single-document shell
(``#main-panel``, no ``.jp-NotebookPanel`` tab area and no status bar) and where the kernel's state is
shown: the toolbar's ``.jp-Notebook-ExecutionIndicator`` (``data-status``), which says "idle" even
before a kernel is attached, so readiness is read from ``window.jupyterapp`` instead.
"""

from __future__ import annotations

from tests.browser.jupyter import JupyterServer, NotebookPage


class NotebookServer(JupyterServer):
    """`jupyter notebook` (Notebook 7) with private folders, a random token and port."""

    APP = "notebook"
    EXPOSE = "--JupyterNotebookApp.expose_app_in_browser=True"
    TITLE = "Notebook 7"
    EXTRA: list[str] = []  # the default 10 MiB page -> server limit: PNGs must fit under it


class Notebook7Page(NotebookPage):
    """A notebook open in Notebook 7."""

    CELLS = "#main-panel .jp-Notebook .jp-Cell"

    def __init__(self, page, server: NotebookServer, name: str):
        self.page = page
        page.goto(server.url(f"notebooks/{name}"))
        page.wait_for_selector(self.CELLS, timeout=60_000)
        # ready when the kernel is connected and idle: the toolbar's indicator claims idle too early
        # (before any kernel is attached), so ask the application (exposed by expose_app_in_browser)
        page.wait_for_function(
            """() => { const k = window.jupyterapp?.shell?.currentWidget?.sessionContext?.session?.kernel;
                const shown = document.querySelector('.jp-Notebook-ExecutionIndicator')?.dataset.status;
                return k?.status === 'idle' && k?.connectionStatus === 'connected' && shown === 'idle'; }""",
            timeout=60_000,
        )
