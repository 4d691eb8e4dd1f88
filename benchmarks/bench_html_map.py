"""Interactive HTML map at scale (run by hand; needs Debian chromium + chromium-driver and
selenium, as the browser tests do).

    python3 benchmarks/bench_html_map.py [n] [--coordinates]

Network: n states (default 10^5) and 3 n links: directed G(n, m) stub pairs (seed 1,
self-loops and duplicates removed). Without ``--coordinates`` the positions come from
the layout (the slow path); with it, from random x/y in the node table.

Measures: the map's Python side (marks, placement, payload, HTML text) and the page
size; then in headless Chromium: the first full render (navigation start to the end of
the first drawn frame, so parsing the page and the JSON is included), the cost of a
sharp redraw of the whole map, and frame times while panning (120 frames, each moved by
one panBy as a drag does, drawn in requestAnimationFrame): the time our frame function
takes, and the interval between animation frames the browser achieved.
"""

from __future__ import annotations

import shutil
import statistics
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

from netctl import StructuredSystem
from netctl.viz import map_marks
from netctl.viz.interactive import map_html, map_payload
from netctl.viz.placement import map_placement


def network(n: int, k: float = 3.0, seed: int = 1, coords: bool = False) -> StructuredSystem:
    rng = np.random.default_rng(seed)
    m = int(n * k * 1.02)
    e = np.unique(np.column_stack([rng.integers(0, n, m), rng.integers(0, n, m)]), axis=0)
    e = e[e[:, 0] != e[:, 1]][: int(n * k)]
    nodes = {"x": rng.random(n) * 1000, "y": rng.random(n) * 1000} if coords else None
    return StructuredSystem.from_edges(e[:, 0], e[:, 1], n, nodes=nodes)


PAN = """
var done = arguments[0], m = window.netctlMaps[0], k = 0, last = null, gaps = [];
var before = m.frameTimes.length;
function step(t) {
  if (last !== null) { gaps.push(t - last); }
  last = t;
  if (k++ < 120) { m.panBy(4, 2); requestAnimationFrame(step); }
  else { done({draw: m.frameTimes.slice(before), gaps: gaps}); }
}
requestAnimationFrame(step);
"""


def main() -> None:
    args = [a for a in sys.argv[1:] if not a.startswith("--")]
    n = int(float(args[0])) if args else 100_000
    coords = "--coordinates" in sys.argv
    s = network(n, coords=coords)
    t0 = time.perf_counter()
    marks = map_marks(s)
    t1 = time.perf_counter()
    placement = map_placement(s)
    t2 = time.perf_counter()
    page = map_html(map_payload(s, marks, placement))
    t3 = time.perf_counter()
    print(f"{n} states, {s.n_links} links; placement {placement.how}")
    print(f"python: marks {t1 - t0:.2f} s, placement {t2 - t1:.2f} s, payload+HTML "
          f"{t3 - t2:.2f} s; page {len(page.encode()) / 1e6:.2f} MB")

    from selenium import webdriver
    from selenium.webdriver.chrome.service import Service

    opts = webdriver.ChromeOptions()
    opts.binary_location = shutil.which("chromium") or "/usr/bin/chromium"
    for a in ("--headless=new", "--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage",
              "--window-size=1300,950", "--force-device-scale-factor=1"):
        opts.add_argument(a)
    drv = webdriver.Chrome(service=Service(shutil.which("chromedriver")), options=opts)
    drv.set_script_timeout(120)
    try:
        with tempfile.TemporaryDirectory() as tmp:
            f = Path(tmp) / "map.html"
            f.write_text(page, encoding="utf-8")
            drv.get(f.as_uri())
            for _ in range(600):
                first = drv.execute_script(
                    "var m = (window.netctlMaps || [])[0];"
                    "return m && m.firstFrameAt !== undefined ? "
                    "[m.firstFrameAt, m.firstRenderMs, m.baseCost, m.costs] : null;")
                if first:
                    break
                time.sleep(0.05)
            assert first, "the map never drew"
            print(f"browser: first full render {first[0] / 1000:.2f} s after navigation "
                  f"start ({first[1] / 1000:.2f} s of it in the renderer); a sharp redraw "
                  f"of the whole map {first[2]:.0f} ms {first[3]}")
            for _ in range(3):
                r = drv.execute_async_script(PAN)
                print(f"panning: frame function median {statistics.median(r['draw']):.1f} "
                      f"ms (max {max(r['draw']):.1f}); animation-frame interval median "
                      f"{statistics.median(r['gaps']):.1f} ms, 90th percentile "
                      f"{sorted(r['gaps'])[int(len(r['gaps']) * 0.9)]:.1f} ms")
                time.sleep(0.5)
    finally:
        drv.quit()


if __name__ == "__main__":
    main()
