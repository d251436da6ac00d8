"""Headless Chromium driven over its DevTools protocol, for the review-book tests.

Chromium is started with ``--remote-debugging-port=0``; the port it picked is
read from ``DevToolsActivePort`` in its profile folder, and one page target is
driven through a websocket (the ``websocket-client`` package). Every event of a
page load is kept, so a test can ask for console errors, failed requests and
requests that left the machine.
"""

from __future__ import annotations

import base64
import contextlib
import json
import shutil
import subprocess
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

#: Seconds to wait for Chromium to start, or for a page to load.
TIMEOUT = 60.0


def chromium_executable() -> str | None:
    for name in ("chromium", "chromium-browser"):
        found = shutil.which(name)
        if found:
            return found
    return None


@dataclass
class PageLoad:
    """What happened while one page loaded."""

    url: str
    errors: list[str] = field(default_factory=list)
    failed_requests: list[str] = field(default_factory=list)
    outside_requests: list[str] = field(default_factory=list)
    dialogs: list[str] = field(default_factory=list)

    @property
    def clean(self) -> bool:
        return not (self.errors or self.failed_requests or self.outside_requests or self.dialogs)


class Chromium:
    """One headless Chromium with one page; use as a context manager."""

    def __init__(self, profile: Path, width: int = 1280, height: int = 1000):
        import websocket

        executable = chromium_executable()
        if executable is None:
            raise RuntimeError("chromium is not installed")
        profile.mkdir(parents=True, exist_ok=True)
        self._process = subprocess.Popen(
            [
                executable,
                "--headless",
                "--no-sandbox",
                "--disable-gpu",
                "--remote-debugging-port=0",
                f"--user-data-dir={profile}",
                "--no-first-run",
                "--no-default-browser-check",
                "--disable-extensions",
                "--disable-background-networking",
                "--disable-component-update",
                "--disable-sync",
                "--hide-scrollbars",
                f"--window-size={width},{height}",
                "about:blank",
            ],
            stdin=subprocess.DEVNULL,
            stdout=subprocess.DEVNULL,
            stderr=subprocess.DEVNULL,
        )
        port_file = profile / "DevToolsActivePort"
        deadline = time.monotonic() + TIMEOUT
        lines: list[str] = []
        while time.monotonic() < deadline:
            if port_file.is_file():
                lines = port_file.read_text().split()
                if len(lines) >= 2:
                    break
            if self._process.poll() is not None:
                raise RuntimeError(f"chromium exited with {self._process.returncode}")
            time.sleep(0.05)
        else:
            self.close()
            raise RuntimeError("chromium did not open its DevTools port")
        self._socket = websocket.create_connection(
            f"ws://127.0.0.1:{lines[0]}{lines[1]}", timeout=TIMEOUT, suppress_origin=True
        )
        self._next_id = 0
        self._events: list[dict[str, Any]] = []
        target = self.send("Target.createTarget", {"url": "about:blank"})["targetId"]
        self._session = self.send("Target.attachToTarget", {"targetId": target, "flatten": True})[
            "sessionId"
        ]
        for domain in ("Page", "Runtime", "Log", "Network"):
            self.send(f"{domain}.enable", session=True)
        self.send(
            "Emulation.setDeviceMetricsOverride",
            {"width": width, "height": height, "deviceScaleFactor": 1, "mobile": False},
            session=True,
        )

    def __enter__(self) -> Chromium:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def close(self) -> None:
        try:
            if getattr(self, "_socket", None) is not None:
                with contextlib.suppress(Exception):  # it may be gone already
                    self.send("Browser.close")
                self._socket.close()
        finally:
            try:
                self._process.wait(timeout=10)
            except subprocess.TimeoutExpired:
                self._process.kill()
                self._process.wait()

    # ------------------------------------------------------------------ protocol

    def send(self, method: str, params: dict | None = None, *, session: bool = False) -> dict:
        self._next_id += 1
        message: dict[str, Any] = {"id": self._next_id, "method": method, "params": params or {}}
        if session:
            message["sessionId"] = self._session
        self._socket.send(json.dumps(message))
        while True:
            reply = json.loads(self._socket.recv())
            if reply.get("id") == self._next_id:
                if "error" in reply:
                    raise RuntimeError(f"{method}: {reply['error']}")
                return reply.get("result", {})
            self._event(reply)

    def _event(self, event: dict[str, Any]) -> None:
        if "method" not in event:
            return
        self._events.append(event)
        if event["method"] == "Page.javascriptDialogOpening":
            # answer it, or the page would hang; the test sees that it opened
            self._socket.send(
                json.dumps(
                    {
                        "id": 10**9 + len(self._events),
                        "method": "Page.handleJavaScriptDialog",
                        "params": {"accept": True},
                        "sessionId": self._session,
                    }
                )
            )

    def _wait_for(self, method: str, since: int) -> None:
        deadline = time.monotonic() + TIMEOUT
        while time.monotonic() < deadline:
            if any(e["method"] == method for e in self._events[since:]):
                return
            self._event(json.loads(self._socket.recv()))
        raise TimeoutError(f"no {method} within {TIMEOUT} s")

    # ------------------------------------------------------------------ pages

    def load(self, url: str) -> PageLoad:
        """Open ``url``, wait for its load event, and say what went wrong, if anything."""
        start = len(self._events)
        self.send("Page.navigate", {"url": url}, session=True)
        self._wait_for("Page.loadEventFired", start)
        # events that arrive right after the load event (late console messages)
        self.evaluate("new Promise(r => setTimeout(r, 50))", await_promise=True)
        report = PageLoad(url)
        for event in self._events[start:]:
            method, params = event["method"], event.get("params", {})
            if method == "Runtime.exceptionThrown":
                details = params.get("exceptionDetails", {})
                report.errors.append(
                    details.get("exception", {}).get("description") or details.get("text", "")
                )
            elif method == "Runtime.consoleAPICalled" and params.get("type") in ("error", "assert"):
                report.errors.append(
                    " ".join(str(a.get("value", a.get("description"))) for a in params["args"])
                )
            elif method == "Log.entryAdded" and params["entry"].get("level") == "error":
                report.errors.append(params["entry"].get("text", ""))
            elif method == "Network.loadingFailed":
                report.failed_requests.append(
                    f"{params.get('errorText')} ({params.get('type')}, {params.get('requestId')})"
                )
            elif method == "Network.requestWillBeSent":
                requested = params["request"]["url"]
                if not requested.startswith(("file:", "data:", "about:")):
                    report.outside_requests.append(requested)
            elif method == "Page.javascriptDialogOpening":
                report.dialogs.append(params.get("message", ""))
        return report

    def evaluate(self, expression: str, *, await_promise: bool = False) -> Any:
        result = self.send(
            "Runtime.evaluate",
            {"expression": expression, "returnByValue": True, "awaitPromise": await_promise},
            session=True,
        )
        if "exceptionDetails" in result:
            raise RuntimeError(f"{expression}: {result['exceptionDetails']}")
        return result["result"].get("value")

    def screenshot(self) -> bytes:
        """A PNG of the page as shown (the viewport)."""
        data = self.send("Page.captureScreenshot", {"format": "png"}, session=True)["data"]
        return base64.b64decode(data)
