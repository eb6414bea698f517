"""A real browser opens the HTML design note: MathML and SVG are laid out, the page is not blank.

Headless Chromium (Debian package ``chromium``; ``.ci/run`` installs it when missing)
loads the note from a file:// URL. To read layout boxes without a driver, a copy of
the note gets a tiny inline script that writes getBoundingClientRect() results into
the DOM, which ``--dump-dom`` prints; the note itself has no script. The screenshot
is taken of the note as written.
"""

from __future__ import annotations

import html
import json
import re
import shutil
import subprocess
import tempfile

import pytest

from symfilt import catalogue
from symfilt.analysis.stage import analyse
from symfilt.export.note_html import note_html

pytestmark = pytest.mark.browser

FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         "--hide-scrollbars"]

PROBE = """<script>
(function () {
  function box(el) { if (!el) return null; var r = el.getBoundingClientRect(); return [r.width, r.height]; }
  function all(sel) { return Array.prototype.map.call(document.querySelectorAll(sel), box); }
  var out = document.createElement("pre");
  out.id = "probe";
  out.textContent = JSON.stringify({
    math: box(document.querySelector("math")), svg: box(document.querySelector("svg")),
    maths: all("math"), fraction: box(document.querySelector(".formula mfrac")),
    letter: box(document.querySelector(".formula mi")),
    eqs: (function (el) { var r = el.getBoundingClientRect();
                          return [r.left + window.scrollX, r.top + window.scrollY, r.width, r.height]; })
         (document.querySelector("#equations .eqs"))
  });
  document.body.appendChild(out);
})();
</script>"""


def chromium() -> str:
    for name in ("chromium", "chromium-browser", "/usr/bin/chromium"):
        found = shutil.which(name)
        if found:
            return found
    pytest.skip("SKIPPED LOUDLY: headless Chromium not found (install the Debian package `chromium`; "
                ".ci/run does this) - the HTML note was not checked in a real browser")


@pytest.fixture(scope="module")
def note_file(tmp_path_factory):
    d = tmp_path_factory.mktemp("note")
    page = note_html(analyse(catalogue.build("sallen-key-lowpass")), source="@sallen-key-lowpass")
    assert "<script" not in page
    (d / "note.html").write_text(page, encoding="utf-8")
    (d / "probe.html").write_text(page.replace("</body>", PROBE + "\n</body>"), encoding="utf-8")
    return d


def run_chromium(*args: str) -> subprocess.CompletedProcess:
    with tempfile.TemporaryDirectory() as profile:
        return subprocess.run([chromium(), *FLAGS, f"--user-data-dir={profile}", *args],
                              capture_output=True, text=True, timeout=300)


def test_mathml_and_svg_are_laid_out(note_file):
    res = run_chromium("--window-size=1200,1600", "--dump-dom", (note_file / "probe.html").as_uri())
    m = re.search(r'<pre id="probe">(.*?)</pre>', res.stdout, flags=re.S)
    assert m, res.stderr[-2000:]
    boxes = json.loads(html.unescape(m.group(1)))
    assert boxes["math"][0] > 0 and boxes["math"][1] > 0
    assert boxes["svg"][0] > 300 and boxes["svg"][1] > 200
    assert len(boxes["maths"]) >= 10 and all(w > 0 and h > 0 for w, h in boxes["maths"])
    # laid out as mathematics, not as a line of text: a fraction is taller than a letter
    assert boxes["fraction"][1] > 1.5 * boxes["letter"][1]


def test_screenshot_is_not_blank(note_file):
    import matplotlib.image

    shot = note_file / "note.png"
    res = run_chromium(f"--screenshot={shot}", "--window-size=1200,1600", (note_file / "note.html").as_uri())
    assert shot.exists(), res.stderr[-2000:]
    img = matplotlib.image.imread(str(shot))
    assert img.shape[0] == 1600 and img.shape[1] == 1200
    pixels = img[..., :3].reshape(-1, 3)
    assert float(pixels.std()) > 0.02
    assert len({tuple(p) for p in pixels[::97]}) > 20


#: Window of the region screenshot: tall enough to hold the Equations section of the note.
TALL = (1200, 4000)


def test_screenshot_of_the_equations_is_not_blank(note_file):
    # the region where the browser laid out the first view's equations, cut from a screenshot of the
    # note as written: MathML that failed to render would leave it the page's background colour
    import matplotlib.image

    res = run_chromium(f"--window-size={TALL[0]},{TALL[1]}", "--dump-dom", (note_file / "probe.html").as_uri())
    m = re.search(r'<pre id="probe">(.*?)</pre>', res.stdout, flags=re.S)
    assert m, res.stderr[-2000:]
    boxes = json.loads(html.unescape(m.group(1)))
    x, y, w, h = (int(round(v)) for v in boxes["eqs"])
    assert w > 200 and h > 50 and y + h <= TALL[1], boxes["eqs"]
    shot = note_file / "tall.png"
    res = run_chromium(f"--screenshot={shot}", f"--window-size={TALL[0]},{TALL[1]}", (note_file / "note.html").as_uri())
    assert shot.exists(), res.stderr[-2000:]
    img = matplotlib.image.imread(str(shot))[..., :3]
    region = img[y:y + h, x:x + w].reshape(-1, 3)
    background = img[5, 5]
    ink = (abs(region - background).sum(axis=1) > 0.3).mean()
    assert 0.005 < ink < 0.5, ink  # glyphs: some dark pixels, not a solid block
