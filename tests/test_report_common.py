"""Shared by the report tests: building a report once per run, driving headless Chromium over
the DevTools protocol on a pipe (standard library only), and reading PDF pages with poppler.

Also tests of the pieces that need no report: the Markdown escape against a CommonMark
renderer, and the Chromium driver itself (it must catch a console error, a script exception, a
broken image and a network request, or its verdict on the report would mean nothing).
"""

from __future__ import annotations

import base64
import fcntl
import io
import json
import os
import select
import shutil
import signal
import time
from pathlib import Path

import pytest
from click.testing import CliRunner
from conftest import copy_store

MODELS = "davies,extended-debye-huckel,pitzer,bromley"
ELECTROLYTES = ("NaCl", "CaCl2")

_CACHE: dict[str, object] = {}


def run(store: Path, *args: str) -> tuple[int, str, str]:
    from saltbench.cli import cli

    res = CliRunner().invoke(cli, ["--store", str(store), *args], catch_exceptions=False)
    return res.exit_code, res.stdout, res.stderr


def shared_report(tmp_path_factory: pytest.TempPathFactory, seeded_store_file: Path) -> dict:
    """One report of NaCl and CaCl2 with four models, built once per test run."""
    if "main" not in _CACHE:
        root = tmp_path_factory.mktemp("report")
        store = copy_store(seeded_store_file, root / "store.sqlite")
        out = root / "out"
        code, stdout, stderr = run(store, "report", *ELECTROLYTES, "--models", MODELS, "--out", str(out),
                                   "--jobs", "1")
        assert code == 0, stdout + stderr
        _CACHE["main"] = {"store": store, "out": out, "stdout": stdout}
    return _CACHE["main"]  # type: ignore[return-value]


# -- Chromium ------------------------------------------------------------------------------------

def chromium() -> str:
    for name in ("chromium", "chromium-browser", "google-chrome"):
        found = shutil.which(name)
        if found:
            return found
    pytest.fail("headless Chromium not found: install Debian's 'chromium' package "
                "(apt-get install -y chromium); .ci/run installs it in CI")


class DevTools:
    """Chromium with --remote-debugging-pipe: JSON messages, NUL-terminated, on fds 3 and 4."""

    def __init__(self, profile: Path):
        to_child_r, self._w = os.pipe()
        self._r, from_child_w = os.pipe()
        # the protocol wants the pipe on the child's fds 3 and 4; posix_spawn's dup2 actions put
        # it there without touching this process's own fds 3 and 4 (and without preexec_fn).
        # The ends are parked at fds >= 100 first so that neither dup2 can overwrite the other.
        hi_r = fcntl.fcntl(to_child_r, fcntl.F_DUPFD, 100)
        hi_w = fcntl.fcntl(from_child_w, fcntl.F_DUPFD, 100)
        exe = chromium()
        args = [exe, "--headless", "--no-sandbox", "--disable-gpu", "--remote-debugging-pipe",
                f"--user-data-dir={profile}", "--disable-background-networking", "--disable-component-update",
                "--disable-sync", "--no-first-run", "--no-default-browser-check", "--hide-scrollbars",
                "--window-size=1100,1400", "about:blank"]
        self.pid = os.posix_spawn(exe, args, os.environ, file_actions=[
            (os.POSIX_SPAWN_OPEN, 0, os.devnull, os.O_RDONLY, 0),
            (os.POSIX_SPAWN_OPEN, 1, os.devnull, os.O_WRONLY, 0),
            (os.POSIX_SPAWN_OPEN, 2, os.devnull, os.O_WRONLY, 0),
            (os.POSIX_SPAWN_DUP2, hi_r, 3),
            (os.POSIX_SPAWN_DUP2, hi_w, 4)])
        for fd in (to_child_r, from_child_w, hi_r, hi_w):
            os.close(fd)
        self._buf = b""
        self._id = 0
        self.events: list[dict] = []

    def _read(self, deadline: float) -> dict:
        while b"\0" not in self._buf:
            left = deadline - time.monotonic()
            ready, _, _ = select.select([self._r], [], [], max(0.0, left))
            if not ready:
                raise AssertionError("Chromium did not answer (hang guard, not a speed check)")
            chunk = os.read(self._r, 1 << 20)
            if not chunk:
                raise AssertionError("Chromium closed the DevTools pipe")
            self._buf += chunk
        msg, self._buf = self._buf.split(b"\0", 1)
        return json.loads(msg)

    def send(self, method: str, params: dict | None = None, session: str | None = None,
             wait: float = 90.0) -> dict:
        self._id += 1
        msg = {"id": self._id, "method": method, "params": params or {}}
        if session:
            msg["sessionId"] = session
        os.write(self._w, json.dumps(msg).encode() + b"\0")
        deadline = time.monotonic() + wait
        while True:
            m = self._read(deadline)
            if m.get("id") == self._id:
                if "error" in m:
                    raise AssertionError(f"DevTools {method}: {m['error']}")
                return m.get("result", {})
            self.events.append(m)

    def wait_event(self, method: str, wait: float = 90.0) -> dict:
        for i, e in enumerate(self.events):
            if e.get("method") == method:
                return self.events.pop(i)
        deadline = time.monotonic() + wait
        while True:
            m = self._read(deadline)
            if m.get("method") == method:
                return m
            self.events.append(m)

    def close(self) -> None:
        try:
            os.write(self._w, json.dumps({"id": 0, "method": "Browser.close"}).encode() + b"\0")
        except OSError:
            pass
        deadline = time.monotonic() + 20
        while time.monotonic() < deadline:
            if os.waitpid(self.pid, os.WNOHANG)[0]:
                break
            time.sleep(0.1)
        else:
            os.kill(self.pid, signal.SIGKILL)
            os.waitpid(self.pid, 0)
        os.close(self._w)
        os.close(self._r)


IMAGES_JS = ("JSON.stringify({images: Array.from(document.images).map(i => ({alt: i.alt, complete: i.complete,"
             " width: i.naturalWidth, height: i.naturalHeight, shown: i.getBoundingClientRect().width})),"
             " figures: document.querySelectorAll('figure').length, scripts: document.scripts.length,"
             " text: document.body.innerText})")


def open_page(path: Path, profile: Path) -> dict:
    """Load ``path``; return console errors, exceptions, network requests, images, a screenshot."""
    dt = DevTools(profile)
    try:
        target = dt.send("Target.createTarget", {"url": "about:blank"})["targetId"]
        sid = dt.send("Target.attachToTarget", {"targetId": target, "flatten": True})["sessionId"]
        for domain in ("Page", "Runtime", "Log", "Network"):
            dt.send(f"{domain}.enable", session=sid)
        dt.send("Page.navigate", {"url": path.resolve().as_uri()}, session=sid)
        dt.wait_event("Page.loadEventFired")
        info = json.loads(dt.send("Runtime.evaluate", {"expression": IMAGES_JS, "returnByValue": True},
                                  session=sid)["result"]["value"])
        shot = dt.send("Page.captureScreenshot", {"format": "png"}, session=sid)["data"]
        ev = dt.events
        info["console_errors"] = [e["params"] for e in ev if e.get("method") == "Runtime.consoleAPICalled"
                                  and e["params"].get("type") in ("error", "assert")]
        info["log_errors"] = [e["params"]["entry"] for e in ev if e.get("method") == "Log.entryAdded"
                              and e["params"]["entry"].get("level") == "error"]
        info["exceptions"] = [e["params"] for e in ev if e.get("method") == "Runtime.exceptionThrown"]
        info["dialogs"] = [e["params"] for e in ev if e.get("method") == "Page.javascriptDialogOpening"]
        info["requests"] = [e["params"]["request"]["url"] for e in ev
                            if e.get("method") == "Network.requestWillBeSent"
                            and not e["params"]["request"]["url"].startswith(("file:", "data:"))]
        info["screenshot"] = base64.b64decode(shot)
        return info
    finally:
        dt.close()


OVERFLOW_JS = ("JSON.stringify((() => { const w = document.documentElement.clientWidth; const over = [];"
               " document.querySelectorAll('table, figure, img, dl, p, h1, h2, h3, ul').forEach(e => {"
               " const r = e.getBoundingClientRect(); if (r.right > w + 1) over.push(e.tagName + '#' +"
               " (e.id || '') + ' ' + Math.round(r.right)); }); return {width: w, over: over}; })())")


def print_overflow(path: Path, profile: Path, width_px: int) -> dict:
    """Lay the page out with the print stylesheet at ``width_px`` CSS pixels (a paper's text
    width) and list the elements that stick out on the right."""
    dt = DevTools(profile)
    try:
        target = dt.send("Target.createTarget", {"url": "about:blank"})["targetId"]
        sid = dt.send("Target.attachToTarget", {"targetId": target, "flatten": True})["sessionId"]
        dt.send("Page.enable", session=sid)
        dt.send("Emulation.setEmulatedMedia", {"media": "print"}, session=sid)
        dt.send("Emulation.setDeviceMetricsOverride", {"width": width_px, "height": 1200,
                                                        "deviceScaleFactor": 1, "mobile": False}, session=sid)
        dt.send("Page.navigate", {"url": path.resolve().as_uri()}, session=sid)
        dt.wait_event("Page.loadEventFired")
        return json.loads(dt.send("Runtime.evaluate", {"expression": OVERFLOW_JS, "returnByValue": True},
                                  session=sid)["result"]["value"])
    finally:
        dt.close()


def non_blank(png: bytes) -> tuple[float, int]:
    """(share of pixels darker than near-white, number of distinct grey levels) of a PNG."""
    import numpy as np
    from PIL import Image

    img = np.asarray(Image.open(io.BytesIO(png)).convert("L"), dtype=int)
    return float(np.mean(img < 235)), int(np.unique(img).size)


def poppler(tool: str) -> str:
    found = shutil.which(tool)
    if not found:
        pytest.fail(f"{tool} not found: install Debian's 'poppler-utils' package "
                    "(apt-get install -y poppler-utils); .ci/run installs it in CI")
    return found


# -- tests of the pieces -------------------------------------------------------------------------

def test_devtools_driver_catches_what_a_broken_page_does(tmp_path: Path) -> None:
    """The driver must see a console error, an exception, a broken image and a network request;
    otherwise 'no errors' on the report would prove nothing."""
    page = tmp_path / "broken.html"
    page.write_text("<!DOCTYPE html><html><body><p>broken on purpose</p>"
                    "<img alt='bad' src='data:image/png;base64,AAAA'>"
                    "<img alt='remote' src='http://127.0.0.1:9/x.png'>"
                    "<script>console.error('boom'); undefinedFunction();</script></body></html>",
                    encoding="utf-8")
    info = open_page(page, tmp_path / "profile")
    assert any("boom" in json.dumps(e) for e in info["console_errors"])
    assert info["exceptions"], "an uncaught exception must be reported"
    bad = next(i for i in info["images"] if i["alt"] == "bad")
    assert bad["width"] == 0
    assert any(u.startswith("http://127.0.0.1:9/") for u in info["requests"])


def test_blank_page_screenshot_is_seen_as_blank(tmp_path: Path) -> None:
    page = tmp_path / "blank.html"
    page.write_text("<!DOCTYPE html><html><body style='background:#fff'></body></html>", encoding="utf-8")
    share, levels = non_blank(open_page(page, tmp_path / "profile")["screenshot"])
    assert share == 0.0 and levels == 1


def test_markdown_escape_renders_user_text_as_text() -> None:
    """Rendered by markdown-it-py (a CommonMark reference implementation), escaped user text
    comes back as the same text with no element of its own."""
    from markdown_it import MarkdownIt

    from saltbench.report.markdown import escape

    md = MarkdownIt("commonmark").enable("table")
    for text in ["<script>alert(1)</script>", "**bold** and _it_", "[link](x) ![img](y)", "# heading",
                 "1. list", "- item", "> quote", "a | b", "`code`", "&amp; &lt;", "~~strike~~",
                 "back\\slash", "line\nbreak # not heading", "+ plus", "3) three"]:
        html = md.render(escape(text)).strip()
        assert html.startswith("<p>") and html.endswith("</p>"), (text, html)
        inner = html[3:-4]
        for tag in ("<script", "<strong", "<em", "<a ", "<img", "<code", "<h1", "<ol", "<ul", "<blockquote"):
            assert tag not in inner, (text, html)
        import html as h

        assert h.unescape(inner) == text.replace("\n", " "), (text, html)


def test_overflow_check_sees_a_table_wider_than_the_page(tmp_path: Path) -> None:
    page = tmp_path / "wide.html"
    page.write_text("<!DOCTYPE html><html><body><table id='t'><tr><td style='white-space:nowrap'>"
                    + "wide " * 200 + "</td></tr></table></body></html>", encoding="utf-8")
    info = print_overflow(page, tmp_path / "profile", 400)
    assert info["width"] == 400
    assert any(o.startswith("TABLE#t") for o in info["over"])
