"""``node-control`` on star-shaped and other large networks, whole process, before/after.

Run by hand (not part of the test suite)::

    python3 benchmarks/bench_node_control_shapes.py --before /path/to/old/checkout
        [--after /path/to/new/checkout] [--sizes 1e4,1e5] [--shapes out-star,in-star]
        [--runs 3] [--timeout 180] [--work /tmp/netctl-node-control]

Shapes (edge lists ``sU,sV`` written once into ``--work``): ``out-star`` (``s0`` -> every
other state), ``in-star`` (every other state -> ``s0``), ``chain`` (``s0 -> s1 -> ...``),
``grid`` (``netctl generate grid``: a square lattice, links both ways) and ``erdos-renyi``
(``netctl generate erdos-renyi --mean-degree 4``). Each row runs ``netctl node-control
FILE --json`` of the two trees in turn (before, after, before, after, ...; one warm-up
each, not counted; ``run_once`` of ``bench_verbs.py``: wall and CPU seconds of the child
by ``os.wait4``, peak resident set), and the last column says whether the two JSON
outputs are byte for byte the same (``—`` where the before side timed out).
"""

from __future__ import annotations

import argparse
import subprocess
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

import bench_verbs as bv  # noqa: E402

__all__: list[str] = []

SHAPES = ("out-star", "in-star", "chain", "grid", "erdos-renyi")


def write_shape(shape: str, n: int, path: Path, after: str) -> None:
    """The edge list of ``shape`` with ``n`` states at ``path`` (kept if it exists)."""
    if path.exists():
        return
    if shape in ("grid", "erdos-renyi"):
        extra = ["--mean-degree", "4"] if shape == "erdos-renyi" else []
        subprocess.run(bv.netctl(["generate", shape, "--nodes", str(n), *extra, str(path)]),
                       check=True, env={"PYTHONPATH": after, "PATH": "/usr/bin:/bin"},
                       stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        return
    edge = {"out-star": lambda i: f"s0,s{i}\n", "in-star": lambda i: f"s{i},s0\n",
            "chain": lambda i: f"s{i - 1},s{i}\n"}[shape]
    with open(path, "w") as f:
        for lo in range(1, n, 100_000):
            f.write("".join(edge(i) for i in range(lo, min(lo + 100_000, n))))


def same_json(argv: list[str], before: str, after: str, cwd: str) -> str:
    """Whether both trees print the same JSON (``—`` if either does not finish)."""
    out = []
    for tree in (before, after):
        try:
            p = subprocess.run(argv, env={"PYTHONPATH": tree, "PATH": "/usr/bin:/bin"},
                               cwd=cwd, capture_output=True, timeout=bv.TIMEOUT)
        except subprocess.TimeoutExpired:
            return "—"
        out.append(p.stdout)
    return "yes" if out[0] == out[1] else "**no**"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--before", required=True, help="checkout to compare against")
    ap.add_argument("--after", default=str(bv.ROOT), help="checkout measured (default: this)")
    ap.add_argument("--sizes", default="1e4,1e5")
    ap.add_argument("--shapes", default=",".join(SHAPES))
    ap.add_argument("--runs", type=int, default=3)
    ap.add_argument("--timeout", type=float, default=180.0)
    ap.add_argument("--work", default="/tmp/netctl-node-control")
    a = ap.parse_args()
    bv.TIMEOUT = a.timeout
    work = Path(a.work)
    work.mkdir(parents=True, exist_ok=True)
    print("| shape | states | before wall (s) | after wall (s) | before CPU (s) | after CPU (s) "
          "| wall ratio after/before | CPU ratio after/before | after peak (MiB) "
          "| exit codes before/after | same JSON |")
    print("|---|---|---|---|---|---|---|---|---|---|---|")
    for size in a.sizes.split(","):
        n = int(float(size))
        for shape in a.shapes.split(","):
            path = work / f"{shape}-{n}.csv"
            write_shape(shape, n, path, a.after)
            argv = bv.netctl(["node-control", str(path), "--json"])
            row = bv.pairs(shape, argv, a.before, a.after, str(work), a.runs)
            same = same_json(argv, a.before, a.after, str(work))
            print(row.replace(f"| {shape} |", f"| {shape} | {n} |", 1) + f" {same} |",
                  flush=True)


if __name__ == "__main__":
    main()
