"""The stand-in page with anywidget's custom messages wired to the Python widget, for the PNG tests.

``standin.html`` carries ``model.send`` / ``msg:custom``. The Python widget's ``send`` is routed
into the page (as the kernel's comm would), and :meth:`MessagingShown.deliver`
hands what the page sent back to the widget, trait changes first, then custom messages — the order in
which a kernel handles them after a cell has finished.
"""

from __future__ import annotations

import base64

from tests.browser.harness import Shown, StaticServer, show


class MessagingShown(Shown):
    def kernel_send(self, content, buffers=None):
        """What ``widget.send`` does in a kernel: the page's ``msg:custom`` listeners get the content."""
        assert not buffers, "the stand-in carries no kernel -> page buffers"
        self.page.evaluate("(c) => window.__custom(c)", content)

    def wait_outbox(self, n: int = 1, timeout: float = 20_000):
        self.page.wait_for_function("(n) => window.__outbox.length >= n", arg=n, timeout=timeout)

    def deliver(self) -> int:
        """Apply the page's trait changes and custom messages to the Python widget; return how many."""
        changes = self.push_to_kernel()
        outbox = self.page.evaluate("() => window.__outbox.splice(0)")
        for m in outbox:
            buffers = [memoryview(base64.b64decode(b)) for b in m["buffers"]]
            # ipywidgets.Widget._handle_custom_msg is what the comm calls for method "custom"
            self.widget._handle_custom_msg(m["content"], buffers)
        return changes + len(outbox)


def show_messaging(browser, server: StaticServer, widget, monkeypatch, width=940, height=560):
    """Open the widget in the stand-in page; ``widget.send`` goes to that page while the test runs."""
    shown = show(browser, server, widget, width=width, height=height, cls=MessagingShown)
    monkeypatch.setattr(widget, "send", shown.kernel_send)
    return shown
