"""Cost of the edge-list warnings that name lines: two source trees in turn.

Run by hand (not part of the test suite)::

    python3 benchmarks/bench_read_said.py --before /path/to/old/tree [--file NET.csv]
        [--runs 5]

Reads an edge list with :func:`netctl.io.edgelist.read_edgelist` in whole processes of
the two trees in turn (A B A B ..., one warm-up pair first), in four variants:

* the file as it is (no warning: what every large read pays);
* one line ``NAME,`` (one name beside a separator; an integer just above the file's, as a generated file's names) in the middle: the scanner's chunk
  holding it is walked once more for the line (:func:`netctl.io._edgelines.lone_separated`);
* such a line every 100,000 lines: every chunk is walked once more (the worst case);
* a link repeated just before the end: the first repeat is found
  (:func:`netctl.io._edgelines.first_repeat`) and the file read up to it twice for the
  two lines (:func:`netctl.io._edgelines.line_of_link`).

Without ``--file``, a directed Erdős–Rényi network of 10^6 links (``netctl generate``,
mean degree 10 on 2·10^5 states, seed 1) is generated. Reports medians of wall and CPU seconds (user + system of the
child, from ``os.wait4``) of each side and the median of the per-pair ratios
after/before.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))  # run as a script
from _two_trees import check_trees, env_for, machine_line, pair_row, tree_options  # noqa: E402

_READ = ("import sys, warnings; warnings.simplefilter('ignore'); sys.path.remove(''); "
         "from netctl.io.edgelist import read_edgelist; read_edgelist(sys.argv[1])")


def _after_line(data: bytes, at: int) -> int:
    """The offset just past the line break at or after byte ``at``."""
    return data.index(b"\n", at) + 1


def _variants(src: str, d: str) -> dict[str, str]:
    """The file as it is, and the three variants (written into ``d``), built by byte
    offsets (no list of lines: a 10^7-link file stays one bytes object)."""
    with open(src, "rb") as fh:
        data = fh.read()
    out = {"as it is": src}
    mid = _after_line(data, len(data) // 2)
    step = 1_500_000  # about 10^5 lines of two integer names
    cuts = [0] + [_after_line(data, k) for k in range(step, len(data) - 1, step)]
    first = data.split(b"\n", 2)[1]  # the first link (after a header row)
    end = data.rindex(b"\n", 0, len(data) - 1) + 1  # the start of the last line
    for label, parts in (
            ("one 'NAME,' line", [data[:mid], b"3000001,\n", data[mid:]]),
            ("a 'NAME,' line every 10^5 lines", [
                x for a, b in zip(cuts, cuts[1:] + [len(data)])
                for x in (data[a:b], b"%d,\n" % (3_000_001 + a // step))]),
            ("a link repeated at the end", [data[:end], first + b"\n", data[end:]])):
        path = os.path.join(d, f"v{len(out)}.csv")
        with open(path, "wb") as fh:
            fh.writelines(parts)
        out[label] = path
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    tree_options(ap, 5)
    ap.add_argument("--file", help="an edge list (comma-separated, no weights) to read")
    args = ap.parse_args()
    trees = {"before": args.before, "after": args.after}
    with tempfile.TemporaryDirectory() as d:
        check_trees(trees.values(), d)
        src = args.file
        if src is None:
            src = os.path.join(d, "er.csv")
            subprocess.run([sys.executable, "-m", "netctl.cli", "generate", "erdos-renyi", src,
                            "--nodes", "200000", "--mean-degree", "10", "--seed", "1"],
                           env=env_for(args.after), cwd=d, check=True,
                           stdout=subprocess.DEVNULL)
        print(machine_line())
        print("| file | before wall s | after wall s | before cpu s | after cpu s | "
              "ratio wall | ratio cpu |\n|---|---|---|---|---|---|---|")
        for label, path in _variants(os.path.abspath(src), d).items():
            pair_row(label, ["-c", _READ, path], trees, d, args.runs)


if __name__ == "__main__":
    main()
