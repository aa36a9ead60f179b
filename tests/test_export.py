"""Unit tests of export.py: the standalone page's structure and embedding, and the PNG request protocol."""

from __future__ import annotations

import base64
import hashlib
import html
import html.parser
import io
import json
import math
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import axeswidget as aw
from axeswidget import export

NASTY = "</ScRiPt><script>alert(1)</script><!-- \u2028\u2029 & > <"


class Scripts(html.parser.HTMLParser):
    """The <script> elements of a page as the HTML tokenizer of Python's stdlib (html.parser) sees them."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.scripts: list[tuple[dict, str]] = []
        self.title = ""
        self._in = None

    def handle_starttag(self, tag, attrs):
        self._in = tag
        if tag == "script":
            self.scripts.append((dict(attrs), ""))

    def handle_endtag(self, tag):
        self._in = None

    def handle_data(self, data):
        if self._in == "script":
            attrs, text = self.scripts[-1]
            self.scripts[-1] = (attrs, text + data)
        elif self._in == "title":
            self.title += data


def parse(page: str) -> Scripts:
    p = Scripts()
    p.feed(page)
    p.close()
    return p


@pytest.fixture
def widget():
    f = aw.demo.pump_fleet(400, seed=4)
    f[NASTY] = f["head_m"] + 1
    f["grade"] = pd.Categorical(np.array([NASTY, "A<b>", "plain"])[np.arange(len(f)) % 3])
    return aw.AxesWidget(f, axes=["grade", "flow_m3h", "head_m", NASTY], ranges={"head_m": [[10, 40]]})


def test_page_has_exactly_three_scripts_and_the_data_round_trips(widget):
    page = export.to_html(widget, title="Fleet " + NASTY)
    parsed = parse(page)
    kinds = [(a.get("type"), a.get("id")) for a, _ in parsed.scripts]
    assert kinds == [("application/json", "axw-code"), ("application/json", "axw-state"), ("module", None)]
    # every "</script" (any case) in the file is one of the three closing tags; no comment opener at all
    assert len(re.findall(r"</script", page, flags=re.IGNORECASE)) == 3
    assert "<!--" not in page
    assert not any("\u2028" in text or "\u2029" in text for _, text in parsed.scripts)
    assert html.unescape(parsed.title) == "Fleet " + NASTY

    code = json.loads(parsed.scripts[0][1])
    assert code == (Path(aw.__file__).parent / "static" / "widget.js").read_text(encoding="utf-8")
    payload = json.loads(parsed.scripts[1][1])
    state = payload["state"]
    assert [c["name"] for c in state["table"]["columns"]] == ["grade", "flow_m3h", "head_m", NASTY]
    assert state["ranges"] == widget.ranges and state["order"] == widget.order
    assert state["count"] == widget.count == int(widget.data["head_m"].between(10, 40).sum())
    assert NASTY in json.dumps(state["table"], ensure_ascii=False)  # labels came through unchanged
    # Jupyter plumbing and the code itself are not part of the state
    assert not any(k.startswith("_") for k in state) and "views" not in state and "layout" not in state
    assert payload["caption"]["rows"] == 400 and payload["caption"]["title"] == "Fleet " + NASTY

    # the binary buffers come back byte for byte where ipywidgets' own split puts them
    from ipywidgets.widgets.widget import _remove_buffers  # the reference for buffer paths

    full = {k: v for k, v in widget.get_state().items() if k in state}
    _, ref_paths, ref_buffers = _remove_buffers(full)
    assert payload["buffer_paths"] == [list(p) for p in ref_paths]
    assert [base64.b64decode(b) for b in payload["buffers"]] == [bytes(b) for b in ref_buffers]


def test_the_content_security_policy_lets_only_the_loader_run(widget):
    page = export.to_html(widget)
    loader = parse(page).scripts[2][1]
    csp = html.unescape(re.search(r'http-equiv="Content-Security-Policy" content="([^"]*)"', page).group(1))
    # reference: CSP Level 3 hash source, base64 of the SHA-256 of the script's UTF-8 text
    digest = base64.b64encode(hashlib.sha256(loader.encode("utf-8")).digest()).decode()
    assert f"'sha256-{digest}'" in csp
    assert "default-src 'none'" in csp and "unsafe-inline" not in csp.split("script-src")[1].split(";")[0]
    # reference: CSP Level 3 — base-uri and form-action do not fall back to default-src
    assert "base-uri 'none'" in csp and "form-action 'none'" in csp


def test_a_script_end_inside_the_code_cannot_break_out(widget, monkeypatch):
    evil = "/* </script><script>alert(1)</script> <!-- */ const s = '</SCRIPT >\u2028';"
    monkeypatch.setattr(export, "_bundle_code", lambda: evil)
    page = export.to_html(widget)
    parsed = parse(page)
    assert len(parsed.scripts) == 3
    assert json.loads(parsed.scripts[0][1]) == evil


def test_script_json_escapes_and_round_trips():
    value = {"a": NASTY, "b": [1.5, None, "x\u2028y"]}
    text = export.script_json(value)
    assert not set("<>&\u2028\u2029") & set(text)
    assert json.loads(text) == value


def test_non_finite_numbers_become_null(widget, monkeypatch):
    state = widget.get_state()
    state["table"] = {**state["table"], "extra": [math.nan, math.inf, 1.0]}
    monkeypatch.setattr(widget, "get_state", lambda: state)
    payload = json.loads(parse(export.to_html(widget)).scripts[1][1])
    assert payload["state"]["table"]["extra"] == [None, None, 1.0]


def test_to_html_writes_a_file_and_rejects_bad_input(widget, tmp_path):
    out = export.to_html(widget, tmp_path / "fleet.html")
    assert out == tmp_path / "fleet.html"
    assert out.read_text(encoding="utf-8").startswith("<!doctype html>")
    with pytest.raises(ValueError, match="does not exist"):
        export.to_html(widget, tmp_path / "nowhere" / "x.html")
    with pytest.raises(TypeError, match="title must be a str"):
        export.to_html(widget, title=3)
    with pytest.raises(TypeError, match="expects an AxesWidget"):
        export.to_html(aw.demo)  # not a widget at all
    import ipywidgets

    with pytest.raises(TypeError, match="expects an AxesWidget, got IntSlider"):
        export.to_html(ipywidgets.IntSlider())


def test_to_html_says_when_the_bundle_is_missing(widget, monkeypatch, tmp_path):
    monkeypatch.setattr(export, "_STATIC", tmp_path)
    with pytest.raises(export.ExportError, match="npm run build"):
        export.to_html(widget)


# -- PNG request protocol (the page is simulated; tests/browser/test_export.py uses a real one) -----


def _png(width=6, height=4) -> bytes:
    from matplotlib import image  # reference PNG encoder

    buf = io.BytesIO()
    image.imsave(buf, np.random.default_rng(0).random((height, width, 3)), format="png")
    return buf.getvalue()


@pytest.fixture
def shown(widget, monkeypatch):
    """The widget as if one page showed it; what it sends is collected."""
    sent = []
    monkeypatch.setattr(widget, "send", lambda content, buffers=None: sent.append(content))
    widget.views = ["view-1"]
    return widget, sent


def test_save_png_without_a_view_is_a_clear_error(widget, tmp_path):
    assert widget.views == []
    with pytest.raises(export.ExportError, match="no view of this widget is showing"):
        export.save_png(widget, tmp_path / "a.png")
    assert not (tmp_path / "a.png").exists()


@pytest.mark.parametrize("scale", [0, -1, 4.5, math.nan, math.inf, "2", True, None])
def test_save_png_rejects_a_bad_scale(shown, tmp_path, scale):
    w, sent = shown
    with pytest.raises(ValueError, match="scale must be"):
        export.save_png(w, tmp_path / "a.png", scale=scale)
    assert sent == []


def test_save_png_rejects_a_missing_folder(shown, tmp_path):
    w, _ = shown
    with pytest.raises(ValueError, match="does not exist"):
        export.save_png(w, tmp_path / "no" / "a.png")


def test_save_png_writes_the_file_when_the_answer_arrives(shown, tmp_path):
    w, sent = shown
    req = export.save_png(w, tmp_path / "a.png", scale=2)
    assert sent == [{"type": "axw:png", "id": req.id, "scale": 2.0}]
    assert not req.done and not req.path.exists() and "waiting for the page" in repr(req)
    png = _png()
    other = _png(3, 3)
    w._handle_custom_msg({"type": "something else"}, [])  # not ours: ignored
    w._handle_custom_msg({"type": "axw:png", "id": req.id + 1000, "ok": True}, [memoryview(other)])
    assert not req.done
    answer = {"type": "axw:png", "id": req.id, "ok": True, "width": 6, "height": 4, "bytes": len(png)}
    w._handle_custom_msg(answer, [memoryview(png)])
    assert req.done and req.wait(0) == req.path
    assert req.path.read_bytes() == png
    assert (req.width, req.height) == (6, 4) and "saved 6×4 px" in repr(req)
    # a second page's late answer to the same request changes nothing
    w._handle_custom_msg(answer, [memoryview(other)])
    assert req.path.read_bytes() == png


def test_save_png_keeps_the_pages_reason_for_failing(shown, tmp_path):
    w, _ = shown
    req = export.save_png(w, tmp_path / "a.png")
    w._handle_custom_msg({"type": "axw:png", "id": req.id, "ok": False, "error": "too big"}, [])
    assert not req.done and req.error == "the page could not make the PNG: too big"
    with pytest.raises(export.ExportError, match="too big"):
        req.wait(0)
    req2 = export.save_png(w, tmp_path / "b.png")
    w._handle_custom_msg({"type": "axw:png", "id": req2.id, "ok": True}, [memoryview(b"GIF89a....")])
    assert req2.error == "the page's answer is not a PNG file" and not req2.path.exists()


def test_wait_times_out_with_an_explanation(shown, tmp_path):
    w, _ = shown
    req = export.save_png(w, tmp_path / "a.png")
    with pytest.raises(export.ExportError, match="no page answered the PNG request within 0.01 s"):
        req.wait(0.01)


def test_the_page_and_the_kernel_agree_on_the_protocol():
    # the page takes the PNG message and limits from the wire contract (js/wire.ts bundles wire.json);
    # tests/test_conformance.py reads them back from the page's own code
    from axeswidget import wire

    ts = (Path(__file__).parents[1] / "js" / "snapshot.ts").read_text()
    assert 'import { PNG_MAX_BYTES, PNG_MAX_SCALE, PNG_MESSAGE } from "./wire";' in ts
    assert wire.PNG_MESSAGE == export.PNG_MESSAGE
    assert wire.PNG_MAX_SCALE == export.MAX_SCALE


def test_save_png_needs_an_axes_widget(tmp_path):
    import ipywidgets

    with pytest.raises(TypeError, match="save_png expects an AxesWidget, got IntSlider"):
        export.save_png(ipywidgets.IntSlider(), tmp_path / "a.png")
