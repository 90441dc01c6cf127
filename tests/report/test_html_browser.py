"""The HTML record in a real browser (headless Chromium, Debian's package): each shipped example's
record renders to a screenshot that is not blank, and the stream labels and block names of its
flowsheet drawing, measured by the browser's own layout (SVG getBBox), overlap neither each other
nor a block symbol. Skips, saying why, where no Chromium is installed (`.ci/run` installs it).
"""
from __future__ import annotations

import json
import re
import shutil
import struct
import subprocess
import zlib
from pathlib import Path

import pytest

from letdown.cli import main

EXAMPLES = Path(__file__).resolve().parents[2] / "flowsheets"
BROWSER = shutil.which("chromium") or shutil.which("chromium-browser")
pytestmark = pytest.mark.skipif(BROWSER is None, reason="no headless Chromium installed "
                                "(apt-get install chromium; .ci/run does)")

#: Added to a test copy of the record only (the record itself carries no script): writes the
#: browser's boxes of every label, block name and block symbol into the page, for --dump-dom.
PROBE = """<script>
window.addEventListener('load', function () {
  var svg = document.querySelector('svg.flowsheet'), out = [];
  function box(el, what, name) { var b = el.getBBox(); out.push([what, name, b.x, b.y, b.x + b.width, b.y + b.height]); }
  svg.querySelectorAll('g[data-label]').forEach(function (g) { box(g, 'label', g.dataset.label); });
  svg.querySelectorAll('g[data-block]').forEach(function (g) {
    g.querySelectorAll('text').forEach(function (t) { box(t, 'text', g.dataset.block); });
    box(g.firstElementChild, 'symbol', g.dataset.block); });
  var pre = document.createElement('pre'); pre.id = 'probe'; pre.textContent = JSON.stringify(out);
  document.body.appendChild(pre);
});
</script>"""


def _run(*args) -> str:
    out = subprocess.run([BROWSER, "--headless", "--no-sandbox", "--disable-gpu",
                          "--hide-scrollbars", *args], capture_output=True, text=True,
                         timeout=120, check=True)
    return out.stdout


def _png_is_not_blank(path: Path) -> bool:
    """Decode the PNG's pixels (8-bit RGB/RGBA, no filters beyond the standard five) and tell
    whether it holds more than one colour."""
    data = path.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    pos, idat, w = 8, b"", 0
    while pos < len(data):
        n, kind = struct.unpack(">I4s", data[pos:pos + 8])
        chunk = data[pos + 8:pos + 8 + n]
        if kind == b"IHDR":
            w, h, depth, colour = struct.unpack(">IIBB", chunk[:10])
        elif kind == b"IDAT":
            idat += chunk
        pos += 12 + n
    raw = zlib.decompress(idat)
    # enough to see several colours: the filter bytes aside, distinct byte values in the rows
    return len(set(raw[: min(len(raw), 4_000_000)])) > 8


@pytest.mark.slow
@pytest.mark.parametrize("name", [f.stem for f in sorted(EXAMPLES.glob("*.yaml"))])
def test_record_renders_and_its_labels_do_not_overlap(tmp_path, name):
    record = tmp_path / f"{name}.html"
    assert main(["solve", str(EXAMPLES / f"{name}.yaml"), "--html", str(record)]) == 0
    shot = tmp_path / "shot.png"
    _run(f"--screenshot={shot}", "--window-size=1200,1600", record.as_uri())
    assert shot.exists() and _png_is_not_blank(shot)
    probe = tmp_path / "probe.html"
    probe.write_text(record.read_text(encoding="utf-8").replace("</body>", PROBE + "</body>"),
                     encoding="utf-8")
    dom = _run("--dump-dom", "--virtual-time-budget=3000", probe.as_uri())
    m = re.search(r'<pre id="probe">(.*?)</pre>', dom, re.S)
    assert m, "the browser did not lay out the drawing"
    boxes = json.loads(m.group(1).replace("&quot;", '"'))
    labels = [b for b in boxes if b[0] in ("label", "text")]
    symbols = [b for b in boxes if b[0] == "symbol"]
    assert len([b for b in boxes if b[0] == "label"]) > 0
    slack = 0.5                                   # [px] anti-aliasing of touching boxes

    def overlap(a, b):
        return (min(a[4], b[4]) - max(a[2], b[2]) > slack
                and min(a[5], b[5]) - max(a[3], b[3]) > slack)
    for i, a in enumerate(labels):
        for b in labels[i + 1:]:
            if a[0] == b[0] == "text" and a[1] == b[1]:
                continue                          # a block's own name and kind lines
            assert not overlap(a, b), (a, b)
        for s in symbols:
            if a[0] == "text" and a[1] == s[1]:
                continue
            assert not overlap(a, s), (a, s)
