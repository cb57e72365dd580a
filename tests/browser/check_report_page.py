#!/usr/bin/env python3
"""Opens the report page of `rastrum figures` in Debian's headless Chromium, from disk, and checks
that it shows: no script errors, no console errors, no failed or network requests, every image
decoded, no horizontal scrolling of the page or of a table on a laptop-sized window, and a screenshot
that is not blank and holds the figures' colours.

  check_report_page.py RASTRUM WORK_FOLDER

Exits 0 when the page passes, 1 when it does not, 77 (ctest SKIP_RETURN_CODE) only when Chromium
is not installed. Chromium is driven over the DevTools protocol on a pipe (--remote-debugging-pipe:
NUL-separated JSON on file descriptors 3 and 4), so no port is opened and events arrive as they
happen. Before the real page, a control page with known faults must be caught, so a Chromium that
stopped reporting them cannot make the check pass. Standard library only: the PNG decoder below
follows the PNG specification (ISO/IEC 15948, W3C PNG 2nd edition: chunks, zlib stream, the five
row filters).
"""
import base64
import json
import os
import select
import shutil
import subprocess
import sys
import tempfile
import time
import zlib

SKIP = 77
CHROMIUM_FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--no-first-run",
                  "--no-default-browser-check", "--disable-extensions", "--disable-sync", "--hide-scrollbars",
                  "--mute-audio", "--remote-debugging-pipe"]
LAPTOP = (1366, 768)  # a common laptop screen in CSS px (design)


def find_chromium():
    for name in ("chromium", "chromium-browser"):
        path = shutil.which(name)
        if path:
            return path
    return None


class Browser:
    """One headless Chromium with a fresh profile, spoken to over the DevTools pipe."""

    def __init__(self, executable, profile):
        to_child_r, self.to_child = os.pipe()
        self.from_child, from_child_w = os.pipe()

        def wire_pipes():
            # Duplicate first: a pipe end may already sit on descriptor 3 or 4.
            a, b = os.dup(to_child_r), os.dup(from_child_w)
            os.dup2(a, 3)
            os.dup2(b, 4)

        self.log = open(os.path.join(profile, "chromium.log"), "w")
        self.process = subprocess.Popen([executable, *CHROMIUM_FLAGS, "--user-data-dir=" + profile, "about:blank"],
                                        preexec_fn=wire_pipes, close_fds=False, stdin=subprocess.DEVNULL,
                                        stdout=self.log, stderr=self.log)
        os.close(to_child_r)
        os.close(from_child_w)
        self.buffer = b""
        self.next_id = 0
        self.events = []

    def send(self, method, params=None, session=None):
        self.next_id += 1
        message = {"id": self.next_id, "method": method, "params": params or {}}
        if session:
            message["sessionId"] = session
        os.write(self.to_child, json.dumps(message).encode() + b"\0")
        return self.next_id

    def wait_for(self, wanted, timeout=60):
        deadline = time.time() + timeout
        while True:
            while b"\0" in self.buffer:
                raw, self.buffer = self.buffer.split(b"\0", 1)
                message = json.loads(raw)
                if wanted(message):
                    return message
                self.events.append(message)
            left = deadline - time.time()
            if left <= 0:
                raise TimeoutError("Chromium did not answer in %d s" % timeout)
            ready, _, _ = select.select([self.from_child], [], [], min(left, 1.0))
            if ready:
                chunk = os.read(self.from_child, 1 << 20)
                if not chunk:
                    raise RuntimeError("Chromium closed the DevTools pipe (see %s)" % self.log.name)
                self.buffer += chunk

    def call(self, method, params=None, session=None):
        ident = self.send(method, params, session)
        answer = self.wait_for(lambda m: m.get("id") == ident)
        if "error" in answer:
            raise RuntimeError("%s failed: %s" % (method, answer["error"]))
        return answer["result"]

    def close(self):
        try:
            self.send("Browser.close")
            self.process.wait(timeout=20)
        except Exception:
            self.process.kill()
            self.process.wait()
        self.log.close()


def open_page(browser, path, width, height):
    """Loads `path` in a new tab; returns the tab's session once the load event fired."""
    target = browser.call("Target.createTarget", {"url": "about:blank"})["targetId"]
    session = browser.call("Target.attachToTarget", {"targetId": target, "flatten": True})["sessionId"]
    for domain in ("Page", "Runtime", "Log", "Network"):
        browser.call(domain + ".enable", None, session)
    browser.call("Emulation.setDeviceMetricsOverride",
                 {"width": width, "height": height, "deviceScaleFactor": 1, "mobile": False}, session)
    browser.events.clear()
    browser.call("Page.navigate", {"url": "file://" + os.path.abspath(path)}, session)
    browser.wait_for(lambda m: m.get("method") == "Page.loadEventFired" and m.get("sessionId") == session)
    return session


def evaluate(browser, session, expression):
    result = browser.call("Runtime.evaluate", {"expression": expression, "returnByValue": True}, session)
    if "exceptionDetails" in result:
        raise RuntimeError("script in the checker failed: %s" % result["exceptionDetails"])
    return result["result"]["value"]


def problems_of(browser, session):
    """Everything the page did wrong while loading, as sentences."""
    found = []
    for event in browser.events:
        if event.get("sessionId") != session:
            continue
        method, params = event.get("method"), event.get("params", {})
        if method == "Runtime.exceptionThrown":
            details = params["exceptionDetails"]
            text = details.get("exception", {}).get("description") or details.get("text")
            found.append("script error: %s" % text)
        elif method == "Runtime.consoleAPICalled" and params.get("type") in ("error", "assert", "warning"):
            found.append("console %s: %s" % (params["type"], " ".join(str(a.get("value")) for a in params.get("args", []))))
        elif method == "Log.entryAdded" and params["entry"]["level"] in ("error", "warning"):
            found.append("log %s: %s %s" % (params["entry"]["level"], params["entry"]["text"], params["entry"].get("url", "")))
        elif method == "Network.loadingFailed":
            found.append("failed load: %s" % params.get("errorText"))
        elif method == "Network.requestWillBeSent":
            url = params["request"]["url"]
            if not (url.startswith("file://") or url.startswith("data:")):
                found.append("request outside the folder: %s" % url)
    broken = evaluate(browser, session,
                      "JSON.stringify([...document.images].filter(i => !i.complete || i.naturalWidth === 0).map(i => i.src))")
    for src in json.loads(broken):
        found.append("image not shown: %s" % src)
    return found


def read_png(data):
    """(width, height, channels, rows) of an 8-bit greyscale, RGB or RGBA PNG without interlacing."""
    if data[:8] != b"\x89PNG\r\n\x1a\n":
        raise ValueError("not a PNG")
    pos, idat, header = 8, [], None
    while pos < len(data):
        length = int.from_bytes(data[pos:pos + 4], "big")
        kind = data[pos + 4:pos + 8]
        body = data[pos + 8:pos + 8 + length]
        pos += 12 + length
        if kind == b"IHDR":
            header = body
        elif kind == b"IDAT":
            idat.append(body)
        elif kind == b"IEND":
            break
    width, height = int.from_bytes(header[0:4], "big"), int.from_bytes(header[4:8], "big")
    depth, colour, interlace = header[8], header[9], header[12]
    channels = {0: 1, 2: 3, 4: 2, 6: 4}.get(colour)
    if depth != 8 or channels is None or interlace != 0:
        raise ValueError("PNG form not handled: depth %d, colour type %d, interlace %d" % (depth, colour, interlace))
    raw = zlib.decompress(b"".join(idat))
    stride, bpp = width * channels, channels
    rows, prior = [], bytearray(stride)
    for y in range(height):
        start = y * (stride + 1)
        kind, row = raw[start], bytearray(raw[start + 1:start + 1 + stride])
        if kind == 1:
            for i in range(bpp, stride):
                row[i] = (row[i] + row[i - bpp]) & 255
        elif kind == 2:
            row = bytearray((a + b) & 255 for a, b in zip(row, prior))
        elif kind == 3:
            for i in range(stride):
                left = row[i - bpp] if i >= bpp else 0
                row[i] = (row[i] + ((left + prior[i]) >> 1)) & 255
        elif kind == 4:
            for i in range(stride):
                a = row[i - bpp] if i >= bpp else 0
                b, c = prior[i], prior[i - bpp] if i >= bpp else 0
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                row[i] = (row[i] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
        rows.append(row)
        prior = row
    return width, height, channels, rows


def pixel_counts(png, colours, tolerance=40):
    """Pixels that are not near-white, and pixels near each of `colours` (hex), in a screenshot."""
    width, height, channels, rows = read_png(png)
    targets = [tuple(int(c[i:i + 2], 16) for i in (1, 3, 5)) for c in colours]
    ink, near = 0, [0] * len(targets)
    for row in rows:
        for x in range(0, width * channels, channels):
            r, g, b = (row[x], row[x], row[x]) if channels < 3 else (row[x], row[x + 1], row[x + 2])
            if r < 235 or g < 235 or b < 235:
                ink += 1
                for k, (tr, tg, tb) in enumerate(targets):
                    if abs(r - tr) + abs(g - tg) + abs(b - tb) < tolerance:
                        near[k] += 1
    return width * height, ink, near


def screenshot(browser, session, clip):
    shot = browser.call("Page.captureScreenshot", {"format": "png", "captureBeyondViewport": True,
                                                   "clip": dict(clip, scale=1)}, session)
    return base64.b64decode(shot["data"])


def write_control_page(folder):
    """A page with one of each fault the check must catch."""
    os.makedirs(folder, exist_ok=True)
    with open(os.path.join(folder, "broken.svg"), "w") as f:
        f.write("<svg xmlns='http://www.w3.org/2000/svg'><text>unclosed</svg>")
    page = os.path.join(folder, "index.html")
    with open(page, "w") as f:
        f.write("<!DOCTYPE html><html><head><meta charset='utf-8'><title>control</title></head><body>"
                "<img src='missing.svg'><img src='broken.svg'>"
                "<script>console.error('control console error'); throw new Error('control script error');</script>"
                "</body></html>")
    return page


def check_control(browser, folder):
    session = open_page(browser, write_control_page(folder), *LAPTOP)
    found = "\n".join(problems_of(browser, session))
    expected = {"script error": "control script error", "console error": "control console error",
                "missing image": "missing.svg", "malformed SVG": "broken.svg"}
    blind = [what for what, needle in expected.items() if needle not in found]
    if blind:
        print("FAIL: the check does not see these faults of the control page: %s\nit saw:\n%s" % (", ".join(blind), found))
        return False
    return True


def run(command):
    result = subprocess.run(command, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    if result.returncode != 0:
        raise RuntimeError("%s exited %d:\n%s" % (" ".join(command), result.returncode, result.stderr))


def make_report(rastrum, work):
    """Results of both analyses from the project's own synthetic recordings, and their report."""
    frozen, conditions = os.path.join(work, "frozen.h5"), os.path.join(work, "conditions.h5")
    direct, stiminfo = os.path.join(work, "direct.json"), os.path.join(work, "stiminfo.json")
    run([rastrum, "synth", "frozen-bins", "--out", frozen, "--trials", "40", "--duration-s", "2", "--rate-hz", "20,30",
         "--modulation", "1.5", "--seed", "4"])
    run([rastrum, "direct", frozen, "--bin-ms", "2,4", "--letters", "1-4", "--quiet", "--json", direct])
    run([rastrum, "synth", "conditions", "--out", conditions, "--duration-s", "0.5", "--means", "2,4,6,9",
         "--means", "3,3,5,5"])
    run([rastrum, "stiminfo", conditions, "--window-ms", "0:400", "--code", "count", "--slide-ms", "200:100",
         "--null-shuffles", "40", "--bootstrap", "40", "--quiet", "--json", stiminfo])
    report = os.path.join(work, "report")
    run([rastrum, "figures", direct, stiminfo, "--recording", frozen, "--out", report, "--quiet"])
    return os.path.join(report, "index.html")


def main():
    if len(sys.argv) != 3:
        print(__doc__)
        return 2
    rastrum, work = sys.argv[1], sys.argv[2]
    chromium = find_chromium()
    if not chromium:
        print("chromium is not installed: skipped (setup.sh test installs it)")
        return SKIP
    shutil.rmtree(work, ignore_errors=True)
    os.makedirs(work)
    page = make_report(rastrum, work)
    profile = tempfile.mkdtemp(prefix="profile-", dir=work)
    browser = Browser(chromium, profile)
    ok = True
    try:
        if not check_control(browser, os.path.join(work, "control")):
            return 1
        session = open_page(browser, page, *LAPTOP)
        for problem in problems_of(browser, session):
            print("FAIL: " + problem)
            ok = False
        layout = evaluate(browser, session, """JSON.stringify({
            images: document.images.length,
            overflow: document.documentElement.scrollWidth - window.innerWidth,
            wideImages: [...document.images].filter(i => i.getBoundingClientRect().width > window.innerWidth).length,
            scrollingTables: [...document.querySelectorAll('.table-wrap')].filter(e => e.scrollWidth > e.clientWidth).length,
            cautions: document.querySelectorAll('#cautions li').length,
            firstFigure: (() => { const r = document.querySelector('figure img').getBoundingClientRect();
                                  return {x: r.x + scrollX, y: r.y + scrollY, width: r.width, height: r.height}; })()
        })""")
        layout = json.loads(layout)
        svgs = [name for name in os.listdir(os.path.dirname(page)) if name.endswith(".svg")]
        if layout["images"] != len(svgs):
            print("FAIL: the page shows %d images, the folder holds %d SVG files" % (layout["images"], len(svgs)))
            ok = False
        if layout["overflow"] > 0 or layout["wideImages"]:
            print("FAIL: at %dx%d the page scrolls sideways by %d px (%d images wider than the window)"
                  % (LAPTOP[0], LAPTOP[1], layout["overflow"], layout["wideImages"]))
            ok = False
        if layout["scrollingTables"]:
            print("FAIL: at %dx%d %d tables need sideways scrolling" % (LAPTOP[0], LAPTOP[1], layout["scrollingTables"]))
            ok = False
        if layout["cautions"] == 0:
            print("FAIL: 40 trials must draw cautions, and the page lists none at the top")
            ok = False
        # The top of the page (title, cautions, table) must carry ink; the first figure, the
        # Okabe-Ito blue and vermillion of its series (plot_palette.cpp).
        top_pixels, top_ink, _ = pixel_counts(screenshot(browser, session, {"x": 0, "y": 0, "width": LAPTOP[0],
                                                                           "height": LAPTOP[1]}), [])
        fig = layout["firstFigure"]
        fig_pixels, fig_ink, (blue, vermillion) = pixel_counts(screenshot(browser, session, fig), ["#0072B2", "#D55E00"])
        print("top of page: %.1f%% ink; first figure: %.1f%% ink, %d blue and %d vermillion pixels"
              % (100 * top_ink / top_pixels, 100 * fig_ink / fig_pixels, blue, vermillion))
        # Thresholds (design): text and table cover far more than 2% of the first screen; a figure's
        # frame, ticks and labels alone exceed 1%; each series colour shows in well over 50 pixels.
        if top_ink < 0.02 * top_pixels:
            print("FAIL: the top of the page is blank")
            ok = False
        if fig_ink < 0.01 * fig_pixels or blue < 50 or vermillion < 50:
            print("FAIL: the first figure did not draw its series")
            ok = False
    finally:
        browser.close()
    print("page passes" if ok else "page fails: " + page)
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
