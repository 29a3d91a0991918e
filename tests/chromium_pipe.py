"""A tiny headless-chromium driver for the slow page checks: DevTools protocol over a pipe.

Stdlib only. Chromium started with ``--remote-debugging-pipe`` reads protocol messages on its
file descriptor 3 and writes them on 4, each a JSON object ended by a NUL byte. Every wait is
bounded by a deadline, and the browser is killed when the ``Browser`` context ends.
"""

from __future__ import annotations

import base64
import fcntl
import json
import os
import select
import shutil
import signal
import subprocess
import tempfile
import time

import pytest

FLAGS = (
    "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
    "--disable-background-networking", "--disable-component-update", "--disable-sync",
    "--disable-extensions", "--mute-audio", "--remote-debugging-pipe", "--hide-scrollbars",
)
TIMEOUT_S = 30.0
# Paper sizes in inches, the unit the protocol's printToPDF takes (ISO 216 for A4; US Letter).
PAPER = {"A4": (8.27, 11.69), "Letter": (8.5, 11.0)}


def require_tool(name: str) -> str:
    """The tool's path; skip when it is missing, but fail in CI, where it must be installed."""
    path = shutil.which(name)
    if path is None:
        if os.environ.get("CI"):
            pytest.fail(f"{name} is required in CI but is not installed")
        pytest.skip(f"{name} is not installed")
    return path


class Browser:
    """One headless chromium, driven over the DevTools pipe; use as a context manager."""

    def __init__(self, executable: str) -> None:
        self.executable = executable
        self.next_id = 0
        self.buffer = b""
        self.events: list[dict] = []

    def __enter__(self) -> Browser:
        self.profile = tempfile.TemporaryDirectory(prefix="kitleaf-chromium-",
                                                   ignore_cleanup_errors=True)
        to_child_r, self.to_child = os.pipe()
        self.from_child, from_child_w = os.pipe()

        def wire() -> None:  # runs in the child: fd 3 is what it reads, fd 4 what it writes
            high = [fcntl.fcntl(fd, fcntl.F_DUPFD, 10) for fd in (to_child_r, from_child_w)]
            for target, fd in zip((3, 4), high, strict=True):
                os.dup2(fd, target)  # inheritable, unlike the pipe ends themselves

        # close_fds would also close 3 and 4; the pipe ends are close-on-exec anyway.
        self.proc = subprocess.Popen(
            [self.executable, *FLAGS, f"--user-data-dir={self.profile.name}", "about:blank"],
            close_fds=False, preexec_fn=wire, start_new_session=True,
            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
        )
        os.close(to_child_r)
        os.close(from_child_w)
        return self

    def __exit__(self, *exc) -> None:
        try:  # a clean close lets chromium finish writing its profile before it is removed
            self.send("Browser.close")
            self.proc.wait(timeout=10)
        except (AssertionError, OSError, subprocess.TimeoutExpired):
            pass
        try:  # and then any helper process of ours that outlived it
            os.killpg(self.proc.pid, signal.SIGKILL)
        except ProcessLookupError:
            pass
        self.proc.wait(timeout=TIMEOUT_S)
        os.close(self.to_child)
        os.close(self.from_child)
        self.profile.cleanup()

    def send(self, method: str, params: dict | None = None, session: str | None = None) -> dict:
        """Send one command and wait for its answer; protocol errors fail the test."""
        self.next_id += 1
        message = {"id": self.next_id, "method": method, "params": params or {}}
        if session:
            message["sessionId"] = session
        os.write(self.to_child, json.dumps(message).encode() + b"\0")
        reply = self._wait(lambda m: m.get("id") == self.next_id, f"an answer to {method}")
        if "error" in reply:
            raise AssertionError(f"{method} failed: {reply['error']}")
        return reply["result"]

    def wait_event(self, method: str, session: str) -> dict:
        def match(m: dict) -> bool:
            return m.get("method") == method and m.get("sessionId") == session
        seen = next((e for e in self.events if match(e)), None)
        return seen or self._wait(match, method)

    def _wait(self, match, what: str) -> dict:
        deadline = time.monotonic() + TIMEOUT_S
        while True:
            message = self._read(deadline, what)
            if match(message):
                return message
            if "method" in message:
                self.events.append(message)

    def _read(self, deadline: float, what: str) -> dict:
        while b"\0" not in self.buffer:
            left = deadline - time.monotonic()
            ready, _, _ = select.select([self.from_child], [], [], max(left, 0))
            chunk = os.read(self.from_child, 1 << 16) if ready else b""
            if not chunk:
                raise AssertionError(f"chromium gave no {what} within {TIMEOUT_S:.0f} s")
            self.buffer += chunk
        raw, _, self.buffer = self.buffer.partition(b"\0")
        return json.loads(raw)


class Page:
    """A tab of a ``Browser`` with console, log and runtime events recorded."""

    def __init__(self, browser: Browser, url: str, first_script: str = "",
                 width: int | None = None) -> None:
        """Open ``url`` in a new tab; ``first_script`` runs in every document it loads before
        the document's own scripts; ``width`` sets the viewport in CSS pixels."""
        self.browser = browser
        target = browser.send("Target.createTarget", {"url": "about:blank"})["targetId"]
        self.session = browser.send("Target.attachToTarget",
                                    {"targetId": target, "flatten": True})["sessionId"]
        for domain in ("Page", "Runtime", "Log"):
            self.send(f"{domain}.enable")
        if first_script:
            self.send("Page.addScriptToEvaluateOnNewDocument", {"source": first_script})
        if width:
            self.send("Emulation.setDeviceMetricsOverride", {
                "width": width, "height": 800, "deviceScaleFactor": 1, "mobile": width < 600})
        self.send("Page.navigate", {"url": url})
        browser.wait_event("Page.loadEventFired", self.session)

    def send(self, method: str, params: dict | None = None) -> dict:
        return self.browser.send(method, params, self.session)

    def evaluate(self, expression: str):
        result = self.send("Runtime.evaluate", {"expression": expression,
                                                "returnByValue": True, "awaitPromise": True})
        return result["result"].get("value")

    def errors(self) -> list[str]:
        """Console errors, uncaught exceptions and failed loads reported on this page."""
        found = []
        for event in self.browser.events:
            if event.get("sessionId") != self.session:
                continue
            params = event.get("params", {})
            if event["method"] == "Runtime.exceptionThrown":
                found.append(params["exceptionDetails"].get("text", "exception"))
            elif event["method"] == "Runtime.consoleAPICalled" and params["type"] == "error":
                found.append(" ".join(str(a.get("value")) for a in params["args"]))
            elif event["method"] == "Log.entryAdded" and params["entry"]["level"] == "error":
                found.append(f"{params['entry'].get('url', '')}: {params['entry']['text']}")
        return found

    def screenshot(self) -> bytes:
        """The whole page as PNG, at the viewport's width."""
        size = self.send("Page.getLayoutMetrics")["cssContentSize"]
        clip = {"x": 0, "y": 0, "width": size["width"], "height": size["height"], "scale": 1}
        result = self.send("Page.captureScreenshot", {"format": "png", "clip": clip,
                                                      "captureBeyondViewport": True})
        return base64.b64decode(result["data"])

    def pdf(self, paper: str) -> bytes:
        """The page printed on ``paper`` with the browser's default print settings."""
        width, height = PAPER[paper]
        result = self.send("Page.printToPDF", {"paperWidth": width, "paperHeight": height,
                                               "displayHeaderFooter": False})
        return base64.b64decode(result["data"])
