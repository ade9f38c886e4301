#!/usr/bin/python3
"""Opens a report page in headless Chromium (Debian's chromium) through the DevTools protocol
and checks that it renders: no console error or uncaught exception, every interactive chart
drawn (its canvases carry painted pixels and its legend names the series), the static SVG
plots present. Saves a full-page screenshot.

    html_check.py --page report.html --screenshot shot.png
    html_check.py --disc DISC --netlist N.disc --out DIR --screenshot shot.png   (runs it first)

Exit status 0 when the page passes, 1 with the reasons otherwise.
"""
import argparse
import base64
import json
import os
import pathlib
import re
import shutil
import signal
import subprocess
import sys
import tempfile
import time
import urllib.request

import websocket  # Debian's python3-websocket

WIDTH = 1280  # the page is laid out for this width


def start_browser(profile):
    exe = shutil.which("chromium")
    if not exe:
        sys.exit("html_check: chromium not found: apt-get install chromium (.ci/install-deps)")
    proc = subprocess.Popen(
        [exe, "--headless=new", "--no-sandbox", "--disable-gpu", "--no-first-run",
         "--remote-debugging-port=0", f"--user-data-dir={profile}",
         f"--window-size={WIDTH},900", "about:blank"],
        stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True,
        start_new_session=True)  # its own process group, so every helper process is stopped
    deadline = time.time() + 60
    while time.time() < deadline:
        line = proc.stderr.readline()
        if not line and proc.poll() is not None:
            break
        m = re.search(r"DevTools listening on ws://([^/]+)/", line)
        if m:
            return proc, m.group(1)
    stop_browser(proc)
    sys.exit("html_check: chromium did not open its DevTools port")


def stop_browser(proc):
    # Chromium's helper processes outlive the main one and keep writing to the profile, so the
    # whole group is stopped before the profile is removed.
    try:
        os.killpg(proc.pid, signal.SIGKILL)
    except ProcessLookupError:
        pass
    proc.wait()


def remove_profile(profile):
    for _ in range(50):
        shutil.rmtree(profile, ignore_errors=True)
        if not os.path.exists(profile):
            return
        time.sleep(0.1)


class Page:
    def __init__(self, host):
        targets = json.load(urllib.request.urlopen(f"http://{host}/json/list", timeout=30))
        page = next(t for t in targets if t["type"] == "page")
        self.ws = websocket.create_connection(page["webSocketDebuggerUrl"], timeout=60)
        self.next_id = 0
        self.events = []

    def call(self, method, **params):
        self.next_id += 1
        self.ws.send(json.dumps({"id": self.next_id, "method": method, "params": params}))
        while True:
            msg = json.loads(self.ws.recv())
            if msg.get("id") == self.next_id:
                if "error" in msg:
                    raise RuntimeError(f"{method}: {msg['error']}")
                return msg.get("result", {})
            self.events.append(msg)

    def wait_for(self, event, seconds=60):
        deadline = time.time() + seconds
        while time.time() < deadline:
            if any(e.get("method") == event for e in self.events):
                return True
            self.ws.settimeout(max(0.1, deadline - time.time()))
            self.events.append(json.loads(self.ws.recv()))
        return False


# Every chart: its canvases' painted pixels and its legend's text; the static plots.
PROBE = """JSON.stringify({
  charts: [...document.querySelectorAll('.chart')].map(c => ({
    id: c.id,
    painted: [...c.querySelectorAll('canvas')].reduce((n, cv) => {
      const d = cv.getContext('2d').getImageData(0, 0, cv.width, cv.height).data;
      let k = 0; for (let i = 3; i < d.length; i += 4) if (d[i] > 0) k++;
      return n + k; }, 0),
    legend: (document.getElementById(c.id + '-legend') || {}).textContent || ''})),
  svgs: document.querySelectorAll('svg').length,
  height: document.documentElement.scrollHeight,
  width: document.documentElement.scrollWidth})"""


def problems_of(page_path, screenshot):
    problems = []
    profile = tempfile.mkdtemp(prefix="disc-chromium-")
    try:
        proc, host = start_browser(profile)
        try:
            page = Page(host)
            for domain in ("Page", "Runtime", "Log"):
                page.call(f"{domain}.enable")
            page.call("Emulation.setDeviceMetricsOverride", width=WIDTH, height=900,
                      deviceScaleFactor=1, mobile=False)
            page.call("Page.navigate", url=pathlib.Path(page_path).resolve().as_uri())
            if not page.wait_for("Page.loadEventFired"):
                problems.append("the page did not finish loading")
            page.call("Runtime.evaluate", expression="new Promise(r => setTimeout(r, 300))",
                      awaitPromise=True)
            for e in page.events:
                m, p = e.get("method"), e.get("params", {})
                if m == "Runtime.exceptionThrown":
                    d = p["exceptionDetails"]
                    problems.append("uncaught exception: " + d.get("exception", {}).get(
                        "description", d.get("text", "")))
                elif m == "Runtime.consoleAPICalled" and p["type"] in ("error", "assert"):
                    problems.append("console error: " + " ".join(
                        str(a.get("value", a.get("description", ""))) for a in p["args"]))
                elif m == "Log.entryAdded" and p["entry"]["level"] == "error":
                    problems.append("browser error: " + p["entry"]["text"])
            probe = json.loads(page.call("Runtime.evaluate", expression=PROBE,
                                         returnByValue=True)["result"]["value"])
            if not probe["charts"]:
                problems.append("no interactive chart on the page")
            for c in probe["charts"]:
                # A line across a plot several hundred pixels wide paints far more than 200.
                if c["painted"] < 200:
                    problems.append(f"chart {c['id']} is not drawn ({c['painted']} pixels)")
                if not c["legend"].strip():
                    problems.append(f"chart {c['id']} has an empty legend")
            if probe["svgs"] < len(probe["charts"]):
                problems.append("fewer static SVG plots than charts (print needs them)")
            if probe["width"] > WIDTH:
                problems.append(f"the page is wider ({probe['width']} px) than the window")
            height = min(probe["height"], 16000)
            page.call("Emulation.setDeviceMetricsOverride", width=WIDTH, height=height,
                      deviceScaleFactor=1, mobile=False)
            shot = page.call("Page.captureScreenshot", format="png")
            pathlib.Path(screenshot).parent.mkdir(parents=True, exist_ok=True)
            pathlib.Path(screenshot).write_bytes(base64.b64decode(shot["data"]))
            print(f"{page_path}: {len(probe['charts'])} chart(s), {probe['svgs']} SVG plot(s), "
                  f"{probe['height']} px long; screenshot {screenshot}")
        finally:
            stop_browser(proc)
    finally:
        remove_profile(profile)
    return problems


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--page")
    ap.add_argument("--disc")
    ap.add_argument("--netlist")
    ap.add_argument("--out")
    ap.add_argument("--screenshot", required=True)
    a = ap.parse_args()
    page = a.page
    if not page:
        run = subprocess.run([a.disc, "run", "-q", a.netlist, "-o", a.out])
        if run.returncode != 0:
            sys.exit(f"html_check: disc run ended with {run.returncode}")
        page = os.path.join(a.out, "report.html")
    problems = problems_of(page, a.screenshot)
    for p in problems:
        print("FAIL:", p)
    sys.exit(1 if problems else 0)


if __name__ == "__main__":
    main()
