"""Drive headless Chromium over its DevTools protocol (tests only; needs `websocket-client`).

Opens one local page, records console errors, uncaught exceptions and every network request,
evaluates JavaScript expressions and takes a full-page screenshot. Chromium is the Debian
package (/usr/bin/chromium, installed by .ci/run); nothing is downloaded.

    python tests/_chromium.py OUTDIR/report.html shot.png     # screenshot for the docs
"""
from __future__ import annotations

import base64
import json
import os
import shutil
import subprocess
import sys
import tempfile
import time
import urllib.request
from pathlib import Path

CHROMIUM_CANDIDATES = ("/usr/bin/chromium", "/usr/bin/chromium-browser")
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         "--disable-extensions", "--disable-default-apps", "--mute-audio", "--hide-scrollbars",
         "--remote-debugging-port=0", "--remote-allow-origins=*"]


def find_chromium() -> str | None:
    env = os.environ.get("SHIFTCHECK_CHROMIUM")
    for c in ([env] if env else []) + list(CHROMIUM_CANDIDATES):
        if c and os.access(c, os.X_OK):
            return c
    return shutil.which("chromium")


class Browser:
    """One headless Chromium with a fresh profile; use as a context manager."""

    def __init__(self, executable: str, width: int = 1280, height: int = 900, timeout: float = 30.0):
        import websocket   # websocket-client

        self.profile = tempfile.mkdtemp(prefix="shiftcheck-chromium-")
        self.proc = subprocess.Popen([executable, *FLAGS, f"--user-data-dir={self.profile}",
                                      f"--window-size={width},{height}", "about:blank"],
                                     stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        port_file = Path(self.profile) / "DevToolsActivePort"
        deadline = time.monotonic() + timeout
        while not port_file.is_file() or not port_file.read_text().strip():
            if time.monotonic() > deadline or self.proc.poll() is not None:
                self.close()
                raise RuntimeError("Chromium did not open its DevTools port")
            time.sleep(0.05)
        port = int(port_file.read_text().split()[0])
        targets = json.loads(urllib.request.urlopen(f"http://127.0.0.1:{port}/json/list",
                                                    timeout=timeout).read())
        page = next(t for t in targets if t.get("type") == "page")
        self.ws = websocket.create_connection(page["webSocketDebuggerUrl"], timeout=timeout,
                                              suppress_origin=True)
        self.timeout = timeout
        self._id = 0
        self.events: list[dict] = []
        for domain in ("Page", "Runtime", "Network", "Log"):
            self.call(f"{domain}.enable")
        self.call("Emulation.setDeviceMetricsOverride", width=width, height=height,
                  deviceScaleFactor=1, mobile=False)

    def call(self, method: str, **params) -> dict:
        self._id += 1
        my = self._id
        self.ws.send(json.dumps({"id": my, "method": method, "params": params}))
        while True:
            msg = json.loads(self.ws.recv())
            if msg.get("id") == my:
                if "error" in msg:
                    raise RuntimeError(f"{method}: {msg['error']}")
                return msg.get("result", {})
            if "method" in msg:
                self.events.append(msg)

    def wait_for(self, method: str) -> dict:
        deadline = time.monotonic() + self.timeout
        for e in self.events:
            if e["method"] == method:
                return e
        while time.monotonic() < deadline:
            msg = json.loads(self.ws.recv())
            if "method" in msg:
                self.events.append(msg)
                if msg["method"] == method:
                    return msg
        raise TimeoutError(method)

    def open(self, path: Path) -> None:
        self.call("Page.navigate", url=Path(path).resolve().as_uri())
        self.wait_for("Page.loadEventFired")

    def eval(self, expression: str):
        r = self.call("Runtime.evaluate", expression=expression, returnByValue=True)
        if "exceptionDetails" in r:
            raise RuntimeError(f"{expression}: {r['exceptionDetails'].get('text')}")
        return r["result"].get("value")

    def errors(self) -> list[str]:
        """Console errors, log errors and uncaught exceptions seen so far."""
        out = []
        for e in self.events:
            m, p = e["method"], e.get("params", {})
            if m == "Runtime.consoleAPICalled" and p.get("type") in ("error", "assert"):
                out.append("console: " + " ".join(str(a.get("value", a.get("description")))
                                                  for a in p.get("args", [])))
            elif m == "Runtime.exceptionThrown":
                d = p.get("exceptionDetails", {})
                out.append("exception: " + str(d.get("exception", {}).get("description") or d.get("text")))
            elif m == "Log.entryAdded" and p.get("entry", {}).get("level") == "error":
                out.append("log: " + str(p["entry"].get("text")) + " " + str(p["entry"].get("url", "")))
        return out

    def requests(self) -> list[str]:
        """URLs of every request the page made (the page's own file:// load included)."""
        return [e["params"]["request"]["url"] for e in self.events
                if e["method"] == "Network.requestWillBeSent"]

    def screenshot(self, out: Path) -> Path:
        h = int(self.eval("document.documentElement.scrollHeight"))
        w = int(self.eval("document.documentElement.scrollWidth"))
        shot = self.call("Page.captureScreenshot", format="png", captureBeyondViewport=True,
                         clip={"x": 0, "y": 0, "width": w, "height": h, "scale": 1})
        Path(out).write_bytes(base64.b64decode(shot["data"]))
        return Path(out)

    def close(self) -> None:
        try:
            if getattr(self, "ws", None):
                self.ws.close()
        finally:
            if self.proc.poll() is None:
                self.proc.terminate()
                try:
                    self.proc.wait(10)
                except subprocess.TimeoutExpired:
                    self.proc.kill()
                    self.proc.wait()
            shutil.rmtree(self.profile, ignore_errors=True)

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()


if __name__ == "__main__":
    page, png = Path(sys.argv[1]), Path(sys.argv[2])
    exe = find_chromium()
    if not exe:
        sys.exit("no Chromium found")
    with Browser(exe) as b:
        b.open(page)
        b.screenshot(png)
        print("errors:", b.errors(), "requests:", b.requests())
