#!/usr/bin/env python3
"""Opens every demo spec's HTML report in a headless browser, offline.

Fails on a console message, on any resource the page requests, on a plot
with nothing drawn inside its plotting area, and on text overflowing its
box. Saves a PNG screenshot and a printed PDF of each report under
target/report-check/ for a person to look at.

The report itself has no script: the checks run in an instrumented copy
(NAME.check.html) that adds one inline script writing its findings into
the page, which the browser's --dump-dom then prints.

Usage: python3 tests/browser/check_reports.py [SPEC ...]   (from the repository root;
       every demo spec in specs/ unless specs are named)
  CATENA_BIN  the catena binary (default: target/release/catena, else
              target/debug/catena, else `cargo build --release`)
  BROWSER     the browser (default: chromium-headless-shell or chromium,
              installed with apt-get when missing and running as root)
"""

import glob
import json
import os
import re
import shutil
import subprocess
import sys

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
OUT = os.path.join(ROOT, "target", "report-check")
LAPTOP = "1280,800"
# The screenshot's height when the page could not be measured.
FALLBACK_HEIGHT = 7000

CHECK_SCRIPT = r"""
<script>
(function () {
  var problems = [];
  var resources = performance.getEntriesByType('resource');
  resources.forEach(function (r) { problems.push('resource requested: ' + r.name); });
  document.querySelectorAll('svg.plot').forEach(function (svg) {
    var area = svg.querySelector('.plot-area');
    if (!area) { problems.push('plot ' + svg.id + ' has no plotting area'); return; }
    var ax = +area.dataset.x, ay = +area.dataset.y;
    var aw = +area.dataset.width, ah = +area.dataset.height;
    var drawn = 0;
    area.querySelectorAll('.data').forEach(function (el) {
      var b = el.getBBox();
      var inside = b.x + b.width >= ax && b.x <= ax + aw && b.y + b.height >= ay && b.y <= ay + ah;
      if (inside && (b.width > 0 || b.height > 0)) { drawn += 1; }
    });
    if (drawn === 0) { problems.push('plot ' + svg.id + ' draws no data inside its plotting area'); }
    var box = svg.getBoundingClientRect();
    svg.querySelectorAll('text').forEach(function (t) {
      var b = t.getBoundingClientRect();
      if (b.left < box.left - 1 || b.top < box.top - 1 || b.right > box.right + 1 ||
          b.bottom > box.bottom + 1) {
        problems.push('plot ' + svg.id + ': text "' + t.textContent + '" leaves the plot');
      }
    });
  });
  document.querySelectorAll('td, th, p, h1, h2, h3, h4, li, figcaption, main').forEach(function (el) {
    if (el.scrollWidth > el.clientWidth + 1) {
      problems.push('text overflows its box: <' + el.tagName.toLowerCase() + '> ' +
                    el.textContent.slice(0, 60));
    }
  });
  if (document.documentElement.scrollWidth > window.innerWidth + 1) {
    problems.push('the page is wider than the window: ' + document.documentElement.scrollWidth + ' px');
  }
  var pre = document.createElement('pre');
  pre.id = 'catena-check';
  pre.textContent = JSON.stringify({plots: document.querySelectorAll('svg.plot').length, problems: problems,
                                    height: document.documentElement.scrollHeight});
  document.body.appendChild(pre);
})();
</script>
"""


def find_browser():
    if os.environ.get("BROWSER"):
        return os.environ["BROWSER"]
    for name in ("chromium-headless-shell", "chromium"):
        path = shutil.which(name)
        if path:
            return path
    # Debian's package puts the shell outside PATH on some releases.
    for path in ("/usr/lib/chromium-headless-shell/chromium-headless-shell",
                 "/usr/lib/chromium/chromium"):
        if os.path.exists(path):
            return path
    if os.geteuid() == 0 and shutil.which("apt-get"):
        env = dict(os.environ, DEBIAN_FRONTEND="noninteractive")
        subprocess.run(["apt-get", "update", "-qq"], check=True, env=env)
        for package in ("chromium-headless-shell", "chromium"):
            done = subprocess.run(["apt-get", "install", "-y", "-qq", package], env=env)
            if done.returncode == 0:
                return find_browser()
    sys.exit("check_reports: no chromium-headless-shell or chromium (install one, or set BROWSER)")


def find_catena():
    if os.environ.get("CATENA_BIN"):
        return os.environ["CATENA_BIN"]
    for build in ("release", "debug"):
        path = os.path.join(ROOT, "target", build, "catena")
        if os.path.exists(path):
            return path
    subprocess.run(["cargo", "build", "--release"], cwd=ROOT, check=True)
    return os.path.join(ROOT, "target", "release", "catena")


def offline(command):
    """Runs without a network where the kernel allows it (a new network
    namespace), and always behind a proxy that does not exist."""
    if shutil.which("unshare"):
        probe = subprocess.run(["unshare", "-rn", "true"], capture_output=True)
        if probe.returncode == 0:
            return ["unshare", "-rn"] + command
        probe = subprocess.run(["unshare", "-n", "true"], capture_output=True)
        if probe.returncode == 0:
            return ["unshare", "-n"] + command
    return command


def browse(browser, args, url, size=LAPTOP):
    command = offline([browser, "--headless", "--no-sandbox", "--disable-gpu",
                       "--proxy-server=127.0.0.1:9", "--enable-logging=stderr", "--v=0",
                       "--window-size=" + size] + args + [url])
    return subprocess.run(command, capture_output=True, text=True, timeout=120)


def static_problems(html):
    problems = []
    for pattern, what in ((r"<script", "a script"), (r"\ssrc\s*=", "a src attribute"),
                          (r"<link", "a link element"), (r"@import", "an @import"),
                          (r"url\((?!#)", "a url() other than a fragment"),
                          (r"href\s*=\s*\"(?!#)", "an href other than a fragment")):
        if re.search(pattern, html):
            problems.append("the report holds " + what)
    return problems


def check(browser, catena, spec):
    name = os.path.splitext(os.path.basename(spec))[0]
    html_path = os.path.join(OUT, name + ".html")
    made = subprocess.run([catena, "report", spec, "-o", html_path], cwd=ROOT,
                          capture_output=True, text=True)
    if made.returncode not in (0, 1) or not os.path.exists(html_path):
        return [name + ": catena report failed: " + made.stderr.strip()]
    with open(html_path, encoding="utf-8") as f:
        html = f.read()
    problems = static_problems(html)
    check_path = os.path.join(OUT, name + ".check.html")
    with open(check_path, "w", encoding="utf-8") as f:
        f.write(html.replace("</body>", CHECK_SCRIPT + "</body>"))
    dumped = browse(browser, ["--dump-dom", "--virtual-time-budget=3000"], "file://" + check_path)
    found = re.search(r'<pre id="catena-check">(.*?)</pre>', dumped.stdout, re.S)
    height = FALLBACK_HEIGHT
    if not found:
        problems.append("the browser did not run the checks: " + dumped.stderr[-400:])
    else:
        result = json.loads(found.group(1).replace("&quot;", '"').replace("&lt;", "<")
                            .replace("&gt;", ">").replace("&amp;", "&"))
        problems.extend(result["problems"])
        height = max(800, int(result.get("height", FALLBACK_HEIGHT)))
        if result["plots"] == 0:
            problems.append("the report has no plot")
    # The whole page in one screenshot: the window as tall as the page the
    # instrumented copy measured (its check box adds a line at the end).
    # Console messages of the report itself (the instrumented copy logs none).
    plain = browse(browser, ["--screenshot=" + os.path.join(OUT, name + ".png"),
                             "--hide-scrollbars"], "file://" + html_path,
                   size="1280,%d" % height)
    for line in plain.stderr.splitlines() + dumped.stderr.splitlines():
        if "CONSOLE" in line:
            problems.append("console: " + line.strip())
    printed = browse(browser, ["--print-to-pdf=" + os.path.join(OUT, name + ".pdf"),
                               "--no-pdf-header-footer"], "file://" + html_path)
    if not os.path.exists(os.path.join(OUT, name + ".pdf")):
        problems.append("no PDF printed: " + printed.stderr[-300:])
    os.remove(check_path)
    return [name + ": " + p for p in problems]


def main():
    os.makedirs(OUT, exist_ok=True)
    browser = find_browser()
    catena = find_catena()
    specs = sys.argv[1:] or sorted(glob.glob(os.path.join(ROOT, "specs", "*.catena")))
    problems = []
    for spec in specs:
        problems.extend(check(browser, catena, os.path.relpath(os.path.abspath(spec), ROOT)))
    for p in problems:
        print(p)
    print("check_reports: %d reports, %d problems; screenshots and PDFs in %s"
          % (len(specs), len(problems), os.path.relpath(OUT, ROOT)))
    sys.exit(1 if problems else 0)


if __name__ == "__main__":
    main()
