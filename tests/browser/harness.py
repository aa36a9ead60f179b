"""Level-1 browser harness: the real built widget.js in a page with a stand-in anywidget model.

The widget's state (``get_state()``) is served as JSON with its binary buffers base64-encoded; the page
turns them back into DataViews as Jupyter would. What the page sends (``save_changes``) is recorded and
can be applied to the real Python widget with :meth:`Shown.push_to_kernel`, whose answer is sent back
with :meth:`Shown.pull_from_kernel` — a round trip without a Jupyter server.
"""

from __future__ import annotations

import base64
import functools
import http.server
import json
import shutil
import tempfile
import threading
from pathlib import Path

from ipywidgets.widgets.widget import _remove_buffers

import axeswidget

STATIC = Path(axeswidget.__file__).parent / "static"
HERE = Path(__file__).parent


def wire_message(state: dict) -> dict:
    """A widget state as JSON with base64 buffers, the way the page receives it."""
    clean, paths, buffers = _remove_buffers(state)
    return {
        "state": clean,
        "buffer_paths": paths,
        "buffers": [base64.b64encode(bytes(b)).decode("ascii") for b in buffers],
    }


class _Quiet(http.server.SimpleHTTPRequestHandler):
    def log_message(self, *args):
        pass

    def end_headers(self):
        self.send_header("Cache-Control", "no-store")
        super().end_headers()


class StaticServer:
    """Serves one folder on 127.0.0.1 (port chosen by the OS) in a thread."""

    def __init__(self):
        self.dir = Path(tempfile.mkdtemp(prefix="axw-standin-"))
        handler = functools.partial(_Quiet, directory=str(self.dir))
        self.httpd = http.server.ThreadingHTTPServer(("127.0.0.1", 0), handler)
        self.url = f"http://127.0.0.1:{self.httpd.server_address[1]}/"
        threading.Thread(target=self.httpd.serve_forever, daemon=True).start()

    def close(self):
        self.httpd.shutdown()
        shutil.rmtree(self.dir, ignore_errors=True)


class Shown:
    """A widget shown in a stand-in page."""

    def __init__(self, page, widget):
        self.page = page
        self.widget = widget

    def sent(self) -> list[dict]:
        """Messages the page sent since the last call (and forget them)."""
        # as JSON text, as a host sends it: keys such as "__proto__" survive (a structured copy drops them)
        return json.loads(self.page.evaluate("() => JSON.stringify(window.__sent.splice(0))"))

    def push_to_kernel(self) -> int:
        """Apply everything the page sent to the Python widget, in order; return how many messages."""
        msgs = self.sent()
        for m in msgs:
            self.widget.set_state(m)
        return len(msgs)

    def pull_from_kernel(self, names=("ranges", "order", "count", "mask_bits", "answered_seq")):
        """Send the kernel's current values of some traits to the page (as Jupyter would after a change)."""
        state = self.widget.get_state(list(names))
        self.page.evaluate("(m) => window.__apply(JSON.parse(m))", json.dumps(wire_message(state)))
        self.settle()

    def round_trip(self):
        self.push_to_kernel()
        self.pull_from_kernel()

    def settle(self):
        """Wait for two animation frames, so that pending redraws have happened."""
        self.page.evaluate("() => new Promise(r => requestAnimationFrame(() => requestAnimationFrame(r)))")

    def root(self):
        return self.page.locator(".axw-root")

    def layout(self) -> dict:
        return json.loads(self.root().get_attribute("data-layout"))

    def canvas_box(self) -> dict:
        return self.page.locator("canvas.axw-overlay").bounding_box()

    def axis(self, name: str) -> dict:
        return next(a for a in self.layout()["axes"] if a["name"] == name)

    def y_of(self, name: str, value: float) -> float:
        """Page y (CSS px) of a value on an axis, from the layout hook."""
        lay, ax = self.layout(), self.axis(name)
        f = (value - ax["lo"]) / (ax["hi"] - ax["lo"])
        if name in lay.get("flipped", []):
            f = 1 - f
        return self.canvas_box()["y"] + lay["bottom"] - f * (lay["bottom"] - lay["top"])

    def x_of(self, name: str) -> float:
        return self.canvas_box()["x"] + self.axis(name)["x"]

    def drag(self, name: str, v0: float, v1: float, steps: int = 8):
        """Drag with the mouse along an axis from value v0 to value v1."""
        x = self.x_of(name)
        self.page.mouse.move(x, self.y_of(name, v0))
        self.page.mouse.down()
        self.page.mouse.move(x, self.y_of(name, v1), steps=steps)
        self.page.mouse.up()
        self.settle()

    def pixel(self, x: float, y: float, canvas: str = "axw-overlay") -> list[int]:
        """RGBA of one canvas pixel at page coordinates."""
        return self.page.evaluate(
            """([cls, x, y]) => { const c = document.querySelector('canvas.' + cls);
                 const r = c.getBoundingClientRect(), s = c.width / r.width;
                 return Array.from(c.getContext('2d').getImageData(Math.round((x - r.left) * s),
                   Math.round((y - r.top) * s), 1, 1).data); }""",
            [canvas, x, y],
        )


def show(browser, server: StaticServer, widget, width: int = 940, height: int = 520, cls=None) -> Shown:
    """Open a fresh page showing the widget through the stand-in model (as a ``cls``, default Shown)."""
    shutil.copy(STATIC / "widget.js", server.dir / "widget.js")
    shutil.copy(STATIC / "widget.css", server.dir / "widget.css")  # the widget's _css, as a host applies it
    shutil.copy(HERE / "standin.html", server.dir / "index.html")
    (server.dir / "state.json").write_text(json.dumps(wire_message(widget.get_state())))
    page = browser.new_page(viewport={"width": width, "height": height})
    errors: list[str] = []
    page.on("pageerror", lambda e: errors.append(str(e)))
    page.on("dialog", lambda d: (errors.append("dialog: " + d.message), d.dismiss()))
    page.goto(server.url + "index.html")
    page.wait_for_function("() => window.__ready === true", timeout=20_000)
    shown = (cls or Shown)(page, widget)
    shown.errors = errors
    shown.settle()
    return shown
