"""Headless Chromium for the tests that draw a page for real (WebGL in software) with no
network request.

Chromium is driven over the DevTools protocol on a pipe (``--remote-debugging-pipe``: commands
on fd 3, replies on fd 4, NUL-separated JSON), so no extra client library is needed.
"""

from __future__ import annotations

import base64
import io
import json
import os
import select
import shutil
import subprocess
import time

import numpy as np
import pytest

CHROMIUM = next((p for p in (os.environ.get("GEOMLOAD_CHROMIUM"), shutil.which("chromium"),
                             shutil.which("chromium-browser"), "/usr/bin/chromium")
                 if p and os.path.exists(p)), None)
# flags that give a software WebGL context in headless Chromium with no GPU, and keep the
# browser from reaching out on its own (updates, sync, field trials, DNS)
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--use-angle=swiftshader",
         "--enable-unsafe-swiftshader", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         "--disable-extensions", "--mute-audio", "--host-resolver-rules=MAP * ~NOTFOUND",
         "--remote-debugging-pipe"]
TIMEOUT_S = 30.0  # generous per step: software WebGL on 2 shared cores


def need_chromium():
    if CHROMIUM is None:
        if os.environ.get("GEOMLOAD_REQUIRE_CHROMIUM") == "1":
            pytest.fail("chromium not found but GEOMLOAD_REQUIRE_CHROMIUM=1")
        pytest.skip("chromium not installed (Debian package `chromium`)")


# ---------------------------------------------------------------- synthetic wing


# the 3-D view's state once it has drawn ("1") or failed ("error: why"); null while it loads
VIEW_STATE_JS = ("(function(){var r=document.querySelector('.gl3');"
                 "return r&&(r.dataset.drawn||r.dataset.error&&('error: '+r.dataset.error))})()")


class Browser:
    """Headless Chromium on a DevTools pipe."""

    def __init__(self, user_dir):
        self.cmd_r, self.cmd_w = os.pipe()
        self.res_r, self.res_w = os.pipe()

        def fds():
            os.dup2(self.cmd_r, 3)
            os.dup2(self.res_w, 4)

        self.proc = subprocess.Popen([CHROMIUM, *FLAGS, f"--user-data-dir={user_dir}"],
                                     stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL,
                                     stderr=subprocess.DEVNULL, preexec_fn=fds, pass_fds=(3, 4))
        os.close(self.cmd_r)
        os.close(self.res_w)
        self.buf, self.next_id, self.events = b"", 0, []

    def _read(self, deadline):
        while b"\0" not in self.buf:
            left = deadline - time.monotonic()
            if left <= 0 or not select.select([self.res_r], [], [], left)[0]:
                raise TimeoutError("no reply from chromium")
            chunk = os.read(self.res_r, 1 << 20)
            if not chunk:
                raise RuntimeError("chromium closed the DevTools pipe")
            self.buf += chunk
        msg, self.buf = self.buf.split(b"\0", 1)
        return json.loads(msg)

    def send(self, method, params=None, session=None):
        self.next_id += 1
        msg = {"id": self.next_id, "method": method, "params": params or {}}
        if session:
            msg["sessionId"] = session
        os.write(self.cmd_w, json.dumps(msg).encode() + b"\0")
        deadline = time.monotonic() + TIMEOUT_S
        while True:
            m = self._read(deadline)
            if m.get("id") == self.next_id:
                if "error" in m:
                    raise RuntimeError(f"{method}: {m['error']}")
                return m["result"]
            self.events.append(m)

    def open_page(self, url, width, height):
        """A new tab showing `url` at width x height CSS pixels, its network, page and runtime
        events recorded; returns the tab's session id."""
        target = self.send("Target.createTarget", {"url": "about:blank"})["targetId"]
        s = self.send("Target.attachToTarget", {"targetId": target, "flatten": True})["sessionId"]
        for d in ("Network.enable", "Page.enable", "Runtime.enable"):
            self.send(d, session=s)
        self.send("Emulation.setDeviceMetricsOverride",
                  {"width": width, "height": height, "deviceScaleFactor": 1, "mobile": False}, s)
        self.send("Page.navigate", {"url": url}, s)
        return s

    def eval(self, expr, session):
        r = self.send("Runtime.evaluate", {"expression": expr, "returnByValue": True}, session)
        return r["result"].get("value")

    def close(self):
        try:
            self.send("Browser.close")
        except Exception:  # noqa: BLE001 - it may already be gone
            pass
        try:
            self.proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            self.proc.kill()
            self.proc.wait()
        os.close(self.cmd_w)
        os.close(self.res_r)


def shot(b, session, rect):
    from PIL import Image

    r = b.send("Page.captureScreenshot", {"format": "png", "clip": {**rect, "scale": 1}}, session)
    return np.asarray(Image.open(io.BytesIO(base64.b64decode(r["data"]))).convert("RGB"), int)


def wait_for(b, session, expr):
    deadline = time.monotonic() + TIMEOUT_S
    while time.monotonic() < deadline:
        v = b.eval(expr, session)
        if v:
            return v
        time.sleep(0.2)
    raise TimeoutError(expr)


def requested_urls(events) -> list:
    """Every URL the page asked for, in order."""
    return [e["params"]["request"]["url"] for e in events
            if e.get("method") == "Network.requestWillBeSent"]


__all__ = ["CHROMIUM", "FLAGS", "TIMEOUT_S", "VIEW_STATE_JS", "need_chromium", "Browser", "shot",
           "wait_for", "requested_urls"]
