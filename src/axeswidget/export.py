"""Share and keep a view: a PNG picture made by the page, and a standalone HTML page.

``save_png`` asks a page that shows the widget for a picture; the page draws it and sends the PNG
back, and the file is written when it arrives. ``to_html`` writes one self-contained HTML file with
the front-end code, the data and the current state; it opens from disk, without a kernel or a network.
"""

from __future__ import annotations

import base64
import datetime as _dt
import hashlib
import html
import itertools
import json
import math
import threading
import weakref
from pathlib import Path

from .wire import PNG_MAX_SCALE as MAX_SCALE
from .wire import PNG_MESSAGE

_STATIC = Path(__file__).parent / "static"
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
#: state keys that describe the Jupyter plumbing, not the chart; left out of a standalone page
_PLUMBING = {"layout", "tabbable", "tooltip", "views"}


class ExportError(RuntimeError):
    """A picture or page could not be made; the message says why and what to do."""


# -- PNG -------------------------------------------------------------------------------------------

_ids = itertools.count(1)
#: per widget: request id -> PngRequest still waiting for the page
_pending: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()


class PngRequest:
    """A PNG asked of the page; :attr:`done` turns True when the file has been written.

    Attributes: ``path``, ``scale``, ``done`` (file written), ``error`` (message, or None),
    ``width``/``height`` (pixels, once done).
    """

    def __init__(self, path: Path, scale: float, rid: int):
        self.path = path
        self.scale = scale
        self.id = rid
        self.error: str | None = None
        self.width: int | None = None
        self.height: int | None = None
        self._event = threading.Event()

    @property
    def done(self) -> bool:
        """True once the page's PNG has been written to :attr:`path`."""
        return self._event.is_set() and self.error is None

    def wait(self, timeout: float = 30.0) -> Path:
        """Block until the page answered; return the path or raise :class:`ExportError`.

        Only useful where page messages are handled on another thread than the caller's (scripts,
        tests). Inside a Jupyter cell the kernel handles the page's answer only after the cell has
        finished, so waiting there would only time out: look at ``.done`` in a later cell instead.
        """
        if not self._event.wait(timeout):
            raise ExportError(
                f"no page answered the PNG request within {timeout:g} s; is the widget shown in an open "
                "page? (in a notebook the answer arrives after the cell that asked has finished)"
            )
        if self.error is not None:
            raise ExportError(self.error)
        return self.path

    def _finish(self, error: str | None = None) -> None:
        self.error = error
        self._event.set()

    def __repr__(self) -> str:
        if self.error is not None:
            state = f"failed: {self.error}"
        elif self.done:
            state = f"saved {self.width}×{self.height} px"
        else:
            state = "waiting for the page (the file is written when the page answers, after this cell)"
        return f"<PNG {str(self.path)!r}: {state}>"


#: what export needs of a widget: its state (with the ``table`` trait), its views, and page messages
_WIDGET_PARTS = ("table", "views", "get_state", "send", "on_msg")


def _check_widget(widget, what: str) -> None:
    """Refuse anything that does not offer what an AxesWidget offers (this module does not import it)."""
    if not all(hasattr(widget, part) for part in _WIDGET_PARTS):
        raise TypeError(f"{what} expects an AxesWidget, got {type(widget).__name__}")


def _check_scale(scale) -> float:
    if isinstance(scale, bool) or not isinstance(scale, (int, float)) or not math.isfinite(scale):
        raise ValueError(f"scale must be a number, got {scale!r}")
    if not 0 < scale <= MAX_SCALE:
        raise ValueError(f"scale must be in (0, {MAX_SCALE:g}], got {scale!r}")
    return float(scale)


def save_png(widget, path, scale: float = 1, title: str | None = None) -> PngRequest:
    """Ask the page showing ``widget`` for a PNG of the chart and write it to ``path`` when it arrives.

    The picture is what the page shows (lines, axes, ranges and the status line in the bottom-left
    corner) at ``scale`` times the chart's size in CSS pixels, ``scale`` in (0, 4]. When the lines are
    coloured, or a ``title`` is given, a strip above the chart holds the title and the colour legend
    (the picture is then taller by that strip). It is composed from
    the page's canvases, which are drawn at the screen's pixel density: a scale above that density
    enlarges them smoothly but adds no detail. PNGs above 8 MiB are refused by the page (the server
    drops larger page-to-kernel messages); use a smaller scale then.

    **The file is not written yet when this returns.** A Jupyter kernel handles messages from the page
    only between cell executions, so the PNG is written right after the cell that asked has finished.
    Check the returned :class:`PngRequest` in a later cell (``.done``, ``.error``); outside Jupyter,
    where page messages arrive on another thread, ``.wait(timeout)`` blocks until it is written.

    Raises :class:`ExportError` at once when no page shows the widget, and ``ValueError`` for a bad
    ``scale`` or a folder that does not exist. Every open page showing the widget answers and the
    first answer is kept. A page closed without its output being cleared may not have told the kernel
    that its view is gone; if no open page shows the widget then, nothing answers and ``.done`` stays
    False: display the widget again and repeat.
    """
    _check_widget(widget, "save_png")
    scale = _check_scale(scale)
    if title is not None and not isinstance(title, str):
        raise TypeError(f"title must be text or None, got {type(title).__name__}")
    path = Path(path)
    if not path.parent.is_dir():
        raise ValueError(f"cannot write {str(path)!r}: the folder {str(path.parent)!r} does not exist")
    if not widget.views:
        raise ExportError(
            "no view of this widget is showing, so there is no page to draw the PNG; display the widget "
            "(put it last in a cell, or display(w)) and call save_png again"
        )
    waiting = _pending.get(widget)
    if waiting is None:
        waiting = _pending[widget] = {}
        widget.on_msg(_on_message)
    request = PngRequest(path, scale, next(_ids))
    waiting[request.id] = request
    message = {"type": PNG_MESSAGE, "id": request.id, "scale": scale}
    if title:
        message["title"] = title
    widget.send(message)
    return request


def _on_message(widget, content, buffers) -> None:
    """The page's answer to a PNG request: write the file (errors are kept on the request)."""
    if not isinstance(content, dict) or content.get("type") != PNG_MESSAGE:
        return
    request = _pending.get(widget, {}).pop(content.get("id"), None)
    if request is None:
        return  # already answered by another page, or not ours
    if not content.get("ok"):
        request._finish(f"the page could not make the PNG: {content.get('error') or 'no reason given'}")
        return
    data = bytes(buffers[0]) if buffers else b""
    if not data.startswith(PNG_SIGNATURE):
        request._finish("the page's answer is not a PNG file")
        return
    try:
        request.path.write_bytes(data)
    except OSError as err:
        request._finish(f"cannot write {str(request.path)!r}: {err}")
        return
    request.width, request.height = content.get("width"), content.get("height")
    request._finish()


# -- standalone HTML -------------------------------------------------------------------------------


def _bundle_code() -> str:
    code = _STATIC / "widget.js"
    if not code.is_file():
        raise ExportError(f"the front-end bundle {code} is missing; build it with `npm run build`")
    return code.read_text(encoding="utf-8")


def _split_buffers(value, path, paths, buffers):
    """Replace binary values by None, noting where they were (as Jupyter's wire format does)."""
    if isinstance(value, (bytes, bytearray, memoryview)):
        paths.append(path)
        buffers.append(base64.b64encode(bytes(value)).decode("ascii"))
        return None
    if isinstance(value, dict):
        return {k: _split_buffers(v, [*path, k], paths, buffers) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_split_buffers(v, [*path, i], paths, buffers) for i, v in enumerate(value)]
    if isinstance(value, float) and not math.isfinite(value):
        return None  # as JSON.stringify in the browser does
    return value


def script_json(value) -> str:
    """JSON safe inside a ``<script>`` element: ``<``, ``>``, ``&``, U+2028/U+2029 as ``\\uXXXX``.

    These characters can only occur inside JSON strings, where the escapes mean the same thing, so
    ``JSON.parse`` gives back the exact value, and no ``</script`` or ``<!--`` can appear.
    """
    text = json.dumps(value, ensure_ascii=False, allow_nan=False, separators=(",", ":"))
    for ch in "<>&\u2028\u2029":
        text = text.replace(ch, f"\\u{ord(ch):04x}")
    return text


# The page's only script that runs by itself. It reads the two JSON blocks, builds a stand-in for the
# anywidget model (no kernel: `_standalone` makes the view's own mask final), imports the bundle from
# a Blob URL (works from file://) and renders. Text from the data is only set with textContent.
_LOADER = """
const fail = (err) => {
  const box = document.getElementById("axw-error");
  box.hidden = false;
  box.textContent = "This page could not draw the chart: " + ((err && err.message) || err);
};
try {
  const read = (id) => JSON.parse(document.getElementById(id).textContent);
  const payload = read("axw-state");
  const cap = payload.caption;
  document.getElementById("axw-title").textContent = cap.title;
  document.getElementById("axw-meta").textContent =
    "exported from axeswidget" + (cap.version ? " " + cap.version : "") + " on " + cap.date + " \\u00b7 " +
    cap.rows.toLocaleString("en-US") + " rows";
  const attrs = payload.state;
  payload.buffer_paths.forEach((path, k) => {
    const bin = atob(payload.buffers[k]), bytes = new Uint8Array(bin.length);
    for (let i = 0; i < bin.length; i++) bytes[i] = bin.charCodeAt(i);
    let obj = attrs;
    for (let i = 0; i < path.length - 1; i++) obj = obj[path[i]];
    obj[path[path.length - 1]] = new DataView(bytes.buffer);
  });
  attrs._standalone = true;
  attrs.views = [];
  const listeners = {};
  const fire = (ev) => (listeners[ev] || []).slice().forEach((cb) => cb());
  const model = {
    get: (k) => attrs[k],
    set: (k, v) => { attrs[k] = v; fire("change:" + k); fire("change"); },
    save_changes: () => {},
    on: (ev, cb) => { (listeners[ev] = listeners[ev] || []).push(cb); },
    off: (ev, cb) => { listeners[ev] = (listeners[ev] || []).filter((f) => f !== cb); },
    send: () => {},
  };
  const url = URL.createObjectURL(new Blob([read("axw-code")], { type: "text/javascript" }));
  const widget = (await import(url)).default;
  URL.revokeObjectURL(url);
  if (widget.initialize) await widget.initialize({ model });
  await widget.render({ model, el: document.getElementById("axw-host") });
  document.documentElement.dataset.axwReady = "true";
} catch (err) {
  fail(err);
}
"""

_PAGE = """<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta http-equiv="Content-Security-Policy" content="{csp}">
<title>{title}</title>
<style>
body {{ margin: 0; padding: 16px 20px; background: #fff; color: #1f1f1f;
       font: 13px system-ui, -apple-system, "Segoe UI", sans-serif; }}
#axw-caption h1 {{ font-size: 17px; font-weight: 600; margin: 0 0 2px; }}
#axw-meta {{ color: #6b6b6b; margin: 0 0 10px; }}
#axw-host {{ max-width: 1400px; }}
#axw-error {{ color: #b00020; white-space: pre-wrap; }}
</style>
</head>
<body>
<header id="axw-caption"><h1 id="axw-title"></h1><p id="axw-meta"></p></header>
<noscript>This page draws its chart with JavaScript; please allow scripts for this file.</noscript>
<pre id="axw-error" hidden></pre>
<div id="axw-host"></div>
<script type="application/json" id="axw-code">{code}</script>
<script type="application/json" id="axw-state">{state}</script>
<script type="module">{loader}</script>
</body>
</html>
"""


def to_html(widget, path=None, *, title: str = "axeswidget chart", version: str = "") -> str | Path:
    """One self-contained HTML page showing the widget as it is now; written to ``path`` if given.

    The page holds the front-end code, the data (2 bytes per cell, base64-encoded: about 2.7 bytes per
    cell in the file) and the current state (ranges, order, ...). It fetches nothing (a
    Content-Security-Policy forbids any request) and needs no kernel: opened from disk in a browser it
    draws the chart, and ranges can be dragged; the counts are then the page's own, computed from the
    quantised codes rather than the exact values.

    ``version`` is the package version named in the page's caption (``AxesWidget.to_html`` gives it).
    Returns the HTML text when ``path`` is None, else the :class:`~pathlib.Path` written.
    """
    if not isinstance(title, str):
        raise TypeError(f"title must be a str, got {type(title).__name__}")
    _check_widget(widget, "to_html")
    state = {k: v for k, v in widget.get_state().items() if not k.startswith("_") and k not in _PLUMBING}
    paths: list = []
    buffers: list = []
    clean = _split_buffers(state, [], paths, buffers)
    rows = int((state.get("table") or {}).get("n", 0))
    caption = {
        "title": title,
        "version": version,
        "date": _dt.datetime.now().astimezone().strftime("%Y-%m-%d %H:%M %Z").strip(),
        "rows": rows,
    }
    payload = {"state": clean, "buffer_paths": paths, "buffers": buffers, "caption": caption}
    loader = _LOADER
    digest = base64.b64encode(hashlib.sha256(loader.encode("utf-8")).digest()).decode("ascii")
    # only the loader may run (by its hash) and the bundle it imports from a blob: URL; no requests;
    # no <base> element may redirect URLs and no form may submit anywhere (neither falls back to default-src)
    csp = (
        f"default-src 'none'; script-src 'sha256-{digest}' blob:; style-src 'unsafe-inline'; "
        "img-src data: blob:; base-uri 'none'; form-action 'none'"
    )
    page = _PAGE.format(
        csp=csp,
        title=html.escape(title),
        code=script_json(_bundle_code()),
        state=script_json(payload),
        loader=loader,
    )
    if path is None:
        return page
    path = Path(path)
    if not path.parent.is_dir():
        raise ValueError(f"cannot write {str(path)!r}: the folder {str(path.parent)!r} does not exist")
    path.write_text(page, encoding="utf-8")
    return path
