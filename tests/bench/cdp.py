"""A minimal Chrome DevTools Protocol driver for the scale-tier browser figures (no Playwright).

Copied from the project's shared tools for `make bench` (tests/bench/scale.py).

Why: Playwright always enables the CDP Network domain, so every WebSocket frame the page receives is
base64-encoded by the renderer and shipped to Playwright's node driver. With a 400 MB table message
(10^7 rows x 20 columns) that copy alone killed the driver ("Zone Allocation failed - process out of
memory") and inflated the renderer's and the browser process's memory at smaller sizes. This driver
enables only what it uses (Page, Performance, HeapProfiler on demand), so the page sees what a user's
browser sees.

Chromium (tests.conftest CHROMIUM with the project's CHROME_ARGS) is started by us with
--remote-debugging-port=0 (DevTools binds 127.0.0.1) in its own process group and a temporary profile;
close() ends that process group by its PID.
"""

from __future__ import annotations

import itertools
import json
import os
import shutil
import signal
import subprocess
import tempfile
import threading
import time
import urllib.request

import websocket

DIRECT = urllib.request.build_opener(urllib.request.ProxyHandler({}))


class CDPError(RuntimeError):
    pass


class Session:
    """One CDP websocket (a page target)."""

    def __init__(self, ws_url: str):
        self.ws = websocket.create_connection(
            ws_url, suppress_origin=True, timeout=None, enable_multithread=True
        )
        self.ids = itertools.count(1)
        self.pending: dict[int, dict] = {}
        self.cv = threading.Condition()
        self.crashed = False
        self.closed = False
        self.events: list[dict] = []
        threading.Thread(target=self._reader, daemon=True).start()

    def _reader(self):
        while True:
            try:
                raw = self.ws.recv()
            except Exception:
                with self.cv:
                    self.closed = True
                    self.cv.notify_all()
                return
            if not raw:
                continue
            msg = json.loads(raw)
            with self.cv:
                if "id" in msg:
                    self.pending[msg["id"]] = msg
                    self.cv.notify_all()
                else:
                    m = msg.get("method", "")
                    if m in ("Inspector.targetCrashed", "Inspector.detached"):
                        self.crashed = True
                        self.cv.notify_all()
                    if len(self.events) < 1000:
                        self.events.append({"method": m, "params": str(msg.get("params"))[:300]})

    def send(self, method: str, params: dict | None = None, timeout: float = 600.0) -> dict:
        i = next(self.ids)
        self.ws.send(json.dumps({"id": i, "method": method, "params": params or {}}))
        end = time.time() + timeout
        with self.cv:
            while i not in self.pending:
                if self.closed or self.crashed:
                    raise CDPError(f"{method}: target {'crashed' if self.crashed else 'closed'}")
                left = end - time.time()
                if left <= 0:
                    raise CDPError(f"{method}: no answer in {timeout:.0f} s")
                self.cv.wait(min(left, 1.0))
            msg = self.pending.pop(i)
        if "error" in msg:
            raise CDPError(f"{method}: {msg['error']}")
        return msg.get("result", {})

    def evaluate(self, fn: str, arg=None, await_promise: bool = True, timeout: float = 600.0):
        """Call a JS function expression `fn` with one JSON argument; return its JSON value."""
        expr = f"({fn})({json.dumps(arg)})"
        r = self.send(
            "Runtime.evaluate",
            {"expression": expr, "awaitPromise": await_promise, "returnByValue": True},
            timeout=timeout,
        )
        if "exceptionDetails" in r:
            d = r["exceptionDetails"]
            raise CDPError(f"JS error: {d.get('exception', {}).get('description') or d.get('text')}"[:800])
        return r.get("result", {}).get("value")

    def mouse(self, kind: str, x: float, y: float, pressed: bool = False):
        params = {
            "type": kind,
            "x": x,
            "y": y,
            "button": "left" if kind != "mouseMoved" or pressed else "none",
            "buttons": 1 if pressed or kind == "mousePressed" else 0,
            "clickCount": 1 if kind != "mouseMoved" else 0,
        }
        self.send("Input.dispatchMouseEvent", params)

    def close(self):
        try:
            self.ws.close()
        except Exception:
            pass


class Chromium:
    """A headless Chromium we start and end ourselves."""

    def __init__(self, chromium: str, args: list[str], width: int = 1280, height: int = 900):
        self.profile = tempfile.mkdtemp(prefix="perf-chromium-")
        cmd = [
            chromium,
            *args,
            "--remote-debugging-port=0",
            f"--user-data-dir={self.profile}",
            f"--window-size={width},{height}",
            "about:blank",
        ]
        self.proc = subprocess.Popen(
            cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True, start_new_session=True
        )
        self.ws_url = None
        end = time.time() + 60
        while time.time() < end:
            line = self.proc.stderr.readline()
            if not line:
                if self.proc.poll() is not None:
                    break
                continue
            if "DevTools listening on" in line:
                self.ws_url = line.strip().split()[-1]
                break
        if not self.ws_url:
            self.close()
            raise RuntimeError("Chromium did not start its DevTools endpoint")
        threading.Thread(target=self._drain, daemon=True).start()
        self.port = int(self.ws_url.split(":")[2].split("/")[0])
        self.width, self.height = width, height

    def _drain(self):
        for _ in self.proc.stderr:
            pass

    def page(self) -> Session:
        targets = json.loads(DIRECT.open(f"http://127.0.0.1:{self.port}/json/list", timeout=10).read())
        pages = [t for t in targets if t.get("type") == "page"]
        s = Session(pages[0]["webSocketDebuggerUrl"])
        s.send(
            "Emulation.setDeviceMetricsOverride",
            {"width": self.width, "height": self.height, "deviceScaleFactor": 1, "mobile": False},
        )
        # as Playwright does: the page behaves as focused (JupyterLab's shell.currentWidget follows focus)
        s.send("Emulation.setFocusEmulationEnabled", {"enabled": True})
        return s

    def close(self):
        if self.proc.poll() is None:
            try:
                os.killpg(self.proc.pid, signal.SIGTERM)
                self.proc.wait(timeout=10)
            except (subprocess.TimeoutExpired, OSError):
                try:
                    os.killpg(self.proc.pid, signal.SIGKILL)
                    self.proc.wait(timeout=10)
                except (subprocess.TimeoutExpired, OSError):
                    pass
        shutil.rmtree(self.profile, ignore_errors=True)
