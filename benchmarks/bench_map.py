"""Map and report timing on random directed networks (run by hand).

    python3 benchmarks/bench_map.py [n ...]

For each size: time to compute the marks, lay out, draw and write a PNG and an SVG
map, and (up to 20000 states) a full HTML report; side by side, with the share of
each step. Networks: directed G(n, m) with m = 3 n links, seed 1 (random stub pairs,
self-loops and duplicates removed).
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402

from netctl import StructuredSystem  # noqa: E402
from netctl.report import build_report, write_report  # noqa: E402
from netctl.viz import draw_map, map_marks, node_positions, save_figure  # noqa: E402


def network(n: int, k: float = 3.0, seed: int = 1) -> StructuredSystem:
    rng = np.random.default_rng(seed)
    m = int(n * k)
    e = np.unique(np.column_stack([rng.integers(0, n, m), rng.integers(0, n, m)]), axis=0)
    e = e[e[:, 0] != e[:, 1]]
    return StructuredSystem.from_edges(e[:, 0], e[:, 1], n)


def run(n: int, out: Path) -> dict[str, float]:
    s = network(n)
    t = {}
    t0 = time.perf_counter()
    marks = map_marks(s)
    t["marks"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    pos, _ = node_positions(s)
    t["layout"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    ax = draw_map(s, marks, positions=pos)
    t["draw"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    save_figure(ax.figure, out / "map.png")
    t["png"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    save_figure(ax.figure, out / "map.svg")
    t["svg"] = time.perf_counter() - t0
    plt.close(ax.figure)
    t["map_png_total"] = t["marks"] + t["layout"] + t["draw"] + t["png"]
    if n <= 20000:
        t0 = time.perf_counter()
        write_report(build_report(s), out / "report.html")
        t["report_html"] = time.perf_counter() - t0
    t["links"] = s.n_links
    return t


def main(sizes: list[int]) -> None:
    with tempfile.TemporaryDirectory() as d:
        print("| states | links | marks s | layout s | draw s | PNG s | SVG s | map total s "
              "| HTML report s |")
        print("|---|---|---|---|---|---|---|---|---|")
        for n in sizes:
            t = run(n, Path(d))
            print(f"| {n} | {int(t['links'])} | {t['marks']:.2f} | {t['layout']:.2f} | "
                  f"{t['draw']:.2f} | {t['png']:.2f} | {t['svg']:.2f} | "
                  f"{t['map_png_total']:.1f} | "
                  f"{t.get('report_html', float('nan')):.1f} |", flush=True)


if __name__ == "__main__":
    main([int(a) for a in sys.argv[1:]] or [50, 1000, 10000, 100000])
