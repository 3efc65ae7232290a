#!/usr/bin/env python3
"""Check a `wavestack report` page the way a reader would see it.

    render_in_browser.py REPORT.html [SCREENSHOT.png] [--height PIXELS] [--timeout SECONDS]

1. Parses the page as XML (the page is polyglot HTML5/XHTML), prints how many
   <svg> elements it holds, and fails if it refers to anything outside itself
   (src/href attributes, url() or @import in CSS) or holds a <script>.
2. Renders it in headless Chromium and fails (exit 1) if
   - Chromium prints a console message for the page: scripts' errors, and
     also SVG attribute errors such as 'Error: <path> attribute d: Expected
     number', which is how a NaN that slipped into a chart shows up;
   - the page loads any other file or URL (logged through --vmodule by
     file_url_loader_factory and network_delegate);
   - Chromium logs an ERROR that is not known start-up noise (see IGNORED);
   - Chromium fails, times out, or writes no screenshot.
Exit 77 (ctest's skip code) when no `chromium` is on PATH; 0 on success.
Standard library only.
"""

import argparse
import os
import pathlib
import re
import shutil
import subprocess
import sys
import tempfile
import xml.etree.ElementTree as ET

SVG = "{http://www.w3.org/2000/svg}svg"
XLINK_HREF = "{http://www.w3.org/1999/xlink}href"

# Chromium's own log lines that say nothing about the page. Debian 12's
# chromium run headless in a container prints them on every start:
#   dbus/                 no system or session D-Bus in the container
#   device/bluetooth/     BlueZ/Floss manager, reached through D-Bus
#   ui/base/idle/         screen-saver services, reached through D-Bus
#   media/gpu/, gpu/, ui/gl/, components/viz/, ui/ozone/
#                         no GPU or DRM device (we pass --disable-gpu)
#   sandbox/              the GPU process's sandbox under --no-sandbox
#   google_apis/, components/update_client/, net/
#                         Chromium's own background requests failing offline
IGNORED = (
    "dbus/", "device/bluetooth/", "ui/base/idle/", "media/gpu/", "gpu/", "ui/gl/", "components/viz/",
    "ui/ozone/", "sandbox/", "google_apis/", "components/update_client/", "net/",
)
# Chromium's own services: its background requests (clock sync, component
# updates, spell-check dictionaries, account checks) start before and after
# the page loads. A report never names these hosts (step 1 would fail first).
OWN_HOSTS = re.compile(r"^https?://([a-z0-9-]+\.)*(google\.com|googleapis\.com|gvt1\.com|gstatic\.com)(/|:|$)")

# [pid:tid:MMDD/hhmmss.micros:LEVEL:source/file.cc:line] message; console lines have source CONSOLE:line.
LOG_LINE = re.compile(r"^\[\d+:\d+:[\d/.]+:(?P<level>INFO|WARNING|ERROR|FATAL|VERBOSE\d+):(?P<source>[^\]]*)\] ?(?P<message>.*)$")


def check_markup(path):
    """Parse as XML; return (svg count, problems)."""
    root = ET.parse(path).getroot()
    problems = []
    for element in root.iter():
        tag = element.tag.split("}")[-1]
        if tag == "script":
            problems.append("the page holds a <script> element")
        for name in ("src", "href", XLINK_HREF):
            if name in element.attrib:
                problems.append(f"<{tag}> refers to {element.attrib[name]!r}")
        if tag == "style" and re.search(r"url\(|@import", element.text or ""):
            problems.append("the style sheet loads external resources")
    return len(root.findall(f".//{SVG}")), problems


def run_chromium(chromium, page, screenshot, height, timeout):
    """Render the page; return a list of problems."""
    url = pathlib.Path(page).as_uri()  # percent-encoded, as Chromium logs it
    with tempfile.TemporaryDirectory(prefix="wavestack-chromium-") as profile:
        command = [
            chromium, "--headless", "--no-sandbox", "--disable-gpu", "--hide-scrollbars", "--no-first-run",
            "--disable-background-networking", "--disable-component-update", "--disable-sync",
            "--disable-extensions", "--force-device-scale-factor=1", f"--user-data-dir={profile}",
            "--enable-logging=stderr", "--v=0", "--vmodule=file_url_loader_factory=1,network_delegate=1",
            f"--window-size=1280,{height}", f"--screenshot={screenshot}", url,
        ]
        try:
            result = subprocess.run(command, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                                    errors="replace", timeout=timeout)
        except subprocess.TimeoutExpired:
            return [f"chromium did not finish within {timeout} s"]

    problems, ignored = [], 0
    for line in result.stderr.splitlines():
        match = LOG_LINE.match(line)
        if not match:
            continue  # Debian's wrapper script and other unstructured output
        level, source, message = match["level"], match["source"], match["message"]
        if source.startswith("CONSOLE"):
            problems.append(f"console: {message}")
        elif "FileURLLoader::Start:" in message:
            loaded = message.split("FileURLLoader::Start:", 1)[1].strip()
            if loaded != url:
                problems.append(f"the page loads {loaded}")
        elif "NotifyBeforeURLRequest:" in message:
            loaded = message.split("NotifyBeforeURLRequest:", 1)[1].strip()
            if OWN_HOSTS.match(loaded):
                ignored += 1
            else:
                problems.append(f"the page requests {loaded}")
        elif level in ("ERROR", "FATAL"):
            if source.startswith(IGNORED):
                ignored += 1
            else:
                problems.append(f"chromium error: {source}: {message}")
    print(f"chromium: exit code {result.returncode}, {ignored} known harmless log lines ignored")
    if result.returncode != 0:
        problems.append(f"chromium exited with code {result.returncode}")
    if not os.path.isfile(screenshot) or os.path.getsize(screenshot) == 0:
        problems.append(f"no screenshot was written to {screenshot}")
    return problems


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("report")
    parser.add_argument("screenshot", nargs="?")
    parser.add_argument("--height", type=int, default=4000, help="window height in pixels (default 4000)")
    parser.add_argument("--timeout", type=float, default=120.0, help="seconds before chromium is stopped")
    args = parser.parse_args()
    page = os.path.abspath(args.report)

    try:
        count, problems = check_markup(page)
    except (ET.ParseError, OSError) as error:
        print(f"FAIL: {args.report} is not well-formed XML: {error}")
        return 1
    print(f"{count} svg elements")

    chromium = shutil.which("chromium")
    if chromium is None:
        for problem in problems:
            print(f"FAIL: {problem}")
        if problems:
            return 1
        print("chromium not installed: skipped")
        return 77

    with tempfile.TemporaryDirectory(prefix="wavestack-shot-") as scratch:
        screenshot = os.path.abspath(args.screenshot) if args.screenshot else os.path.join(scratch, "page.png")
        if os.path.exists(screenshot):
            os.remove(screenshot)  # a stale file must not pass for a fresh one
        problems += run_chromium(chromium, page, screenshot, args.height, args.timeout)
        if not problems and args.screenshot:
            print(f"screenshot: {screenshot} ({os.path.getsize(screenshot)} bytes)")
    for problem in problems:
        print(f"FAIL: {problem}")
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main())
