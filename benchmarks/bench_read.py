"""Edge-list reading speed: netctl's streaming reader against general CSV readers.

Run by hand (not part of the test suite)::

    python3 benchmarks/bench_read.py --lines 10000000 --repeat 3
    python3 benchmarks/bench_read.py --lines 10000000 --repeat 3 --fresh   # one read a process

Writes synthetic edge lists (integer names; integer names with weights; string names)
to a temporary directory, then times, side by side in one run:

* ``netctl arrays``: :func:`netctl.io.edgelist.read_edge_arrays` (parse + dense ids),
* ``netctl system``: :func:`netctl.io.read` (the above + CSR build, duplicates merged),
* ``pyarrow``: ``pyarrow.csv.read_csv`` + conversion of the columns to numpy,
* ``pyarrow + ids``: the same plus dictionary encoding of the names into dense integer
  ids, which is the work netctl's reader does (it returns ids, not names),
* ``pandas-c`` / ``pandas-pyarrow``: ``pandas.read_csv`` with those engines.

The ratio column is time / fastest general reader. pyarrow and pandas are optional (only
this benchmark uses them: ``pip install pyarrow pandas``); missing ones are skipped.
"""

from __future__ import annotations

import argparse
import gc
import os
import platform
import tempfile
import time
from collections.abc import Callable

import numpy as np


def make_files(directory: str, n_lines: int, seed: int = 7) -> dict[str, str]:
    rng = np.random.default_rng(seed)
    n_nodes = max(10, n_lines // 10)
    src = rng.integers(0, n_nodes, n_lines)
    dst = rng.integers(0, n_nodes, n_lines)
    w = np.round(rng.random(n_lines), 6)
    files = {}
    block = 1 << 20
    for kind in ("int", "int+weight", "string"):
        path = os.path.join(directory, f"edges-{kind}-{n_lines}.csv")
        files[kind] = path
        if os.path.exists(path):
            continue
        with open(path + ".tmp", "w") as fh:
            fh.write("source,target,weight\n" if kind == "int+weight" else "source,target\n")
            for a in range(0, n_lines, block):
                s, t = src[a:a + block], dst[a:a + block]
                if kind == "string":
                    lines = [f"bus{u},bus{v}\n" for u, v in zip(s.tolist(), t.tolist())]
                elif kind == "int":
                    lines = [f"{u},{v}\n" for u, v in zip(s.tolist(), t.tolist())]
                else:
                    lines = [f"{u},{v},{x:g}\n" for u, v, x in
                             zip(s.tolist(), t.tolist(), w[a:a + block].tolist())]
                fh.write("".join(lines))
        os.replace(path + ".tmp", path)
    return files


def _quiet(f: Callable[[str], object]) -> Callable[[str], object]:
    import warnings

    def g(p: str) -> object:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # duplicate-link notes of the random files
            return f(p)
    return g


def readers() -> dict[str, Callable[[str], object]]:
    from netctl.io import read
    from netctl.io.edgelist import read_edge_arrays

    out: dict[str, Callable[[str], object]] = {
        "netctl arrays": read_edge_arrays,
        "netctl system": _quiet(lambda p: read(p, "edgelist")),
    }
    try:
        import pyarrow.csv as pacsv

        import pyarrow as pa

        def _pa(p: str) -> object:
            t = pacsv.read_csv(p)
            return [c.to_numpy() for c in t.columns]

        def _pa_ids(p: str) -> object:
            # the same work as netctl: names -> dense integer ids (dictionary encoding)
            t = pacsv.read_csv(p)
            names = pa.chunked_array(t.column(0).chunks + t.column(1).chunks)
            enc = names.dictionary_encode().combine_chunks()
            return enc.indices.to_numpy(), enc.dictionary, [c.to_numpy() for c in
                                                            t.columns[2:]]
        out["pyarrow"] = _pa
        out["pyarrow + ids"] = _pa_ids
    except ImportError:
        pass
    try:
        import pandas as pd

        out["pandas-c"] = lambda p: pd.read_csv(p, engine="c")
        try:
            import pyarrow  # noqa: F401
            out["pandas-pyarrow"] = lambda p: pd.read_csv(p, engine="pyarrow")
        except ImportError:
            pass
    except ImportError:
        pass
    return out


def _one(reader: str, path: str, tiny_dir: str) -> None:
    """Child of ``--fresh``: warm the reader up on tiny files (imports, compiled-code
    cache), then time one read of ``path`` and print ``wall cpu``."""
    rs = readers()
    f = rs[reader]
    for text in ("1,2\n2,3\n", "a,b\nb,c\n", "1,2,0.5\n2,3,1.5\n"):
        tiny = os.path.join(tiny_dir, f"tiny-{os.getpid()}.csv")
        with open(tiny, "w") as fh:
            fh.write(text)
        f(tiny)
        os.remove(tiny)
    c0, t0 = time.process_time(), time.perf_counter()
    f(path)
    print(f"{time.perf_counter() - t0} {time.process_time() - c0}")


def _fresh(files: dict[str, str], kinds: list[str], repeat: int, tiny_dir: str) -> None:
    """Each read in a new process, as on the command line (one read per process): the
    reader's memory is new to the process, which costs page faults on every reader."""
    import subprocess
    import sys

    names = list(readers())
    for kind, path in files.items():
        if kind not in kinds:
            continue
        times: dict[str, list[tuple[float, float]]] = {k: [] for k in names}
        for rnd in range(repeat):
            for name in names[rnd % len(names):] + names[:rnd % len(names)]:
                out = subprocess.run([sys.executable, __file__, "--one", name, path,
                                      "--dir", tiny_dir], capture_output=True, text=True,
                                     check=True).stdout.split()
                times[name].append((float(out[-2]), float(out[-1])))
        best = {k: min(v) for k, v in times.items()}
        med = {k: float(np.median([t for t, _ in v])) for k, v in times.items()}
        general = [v[0] for k, v in best.items() if not k.startswith("netctl")]
        ref = min(general) if general else np.nan
        size = os.path.getsize(path) / 1e6
        print(f"\n## {kind} ({size:.0f} MB), one read per fresh process, best of {repeat}"
              "\n\n| reader | wall s (best) | wall s (median) | CPU s | wall ratio to fastest "
              "general reader |\n|---|---|---|---|---|")
        for name, (t, c) in best.items():
            print(f"| {name} | {t:.2f} | {med[name]:.2f} | {c:.2f} | {t / ref:.2f} |",
                  flush=True)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--lines", type=int, default=1_000_000)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--dir", default=os.path.join(tempfile.gettempdir(), "netctl-bench"))
    ap.add_argument("--kinds", default="int,int+weight,string",
                    help="comma-separated file kinds to time")
    ap.add_argument("--fresh", action="store_true",
                    help="time every read in a new process (one read per process)")
    ap.add_argument("--one", nargs=2, metavar=("READER", "PATH"), help=argparse.SUPPRESS)
    args = ap.parse_args()
    os.makedirs(args.dir, exist_ok=True)
    if args.one:
        _one(args.one[0], args.one[1], args.dir)
        return
    files = make_files(args.dir, args.lines)
    if args.fresh:
        print(f"# {platform.processor() or platform.machine()}, {os.cpu_count()} cpus, "
              f"{args.lines} lines")
        _fresh(files, args.kinds.split(","), args.repeat, args.dir)
        return
    rs = readers()
    # warm up (numba compile / cache load) on a tiny file
    tiny = os.path.join(args.dir, "tiny.csv")
    with open(tiny, "w") as fh:
        fh.write("1,2\n2,3\n")
    for f in rs.values():
        f(tiny)
    with open(tiny, "w") as fh:
        fh.write("a,b\nb,c\n")
    for f in rs.values():
        f(tiny)
    print(f"# {platform.processor() or platform.machine()}, {os.cpu_count()} cpus, "
          f"{args.lines} lines, best of {args.repeat}")
    print("Readers alternate within each round, in an order rotated every round (the "
          "machine is shared and noisy); the best wall time and the CPU time of that run "
          "are kept per reader.")
    for kind, path in files.items():
        if kind not in args.kinds.split(","):
            continue
        size = os.path.getsize(path) / 1e6
        best = {name: (np.inf, np.inf) for name in rs}
        names = list(rs)
        for rnd in range(args.repeat):
            # rotate the order each round: the first reader of a round finds the memory
            # the previous round freed cold (page faults), which would otherwise always
            # penalise the same reader
            for name in names[rnd % len(names):] + names[:rnd % len(names)]:
                f = rs[name]
                gc.collect()
                c0, t0 = time.process_time(), time.perf_counter()
                r = f(path)
                t, c = time.perf_counter() - t0, time.process_time() - c0
                del r
                if t < best[name][0]:
                    best[name] = (t, c)
        general = [v[0] for k, v in best.items() if not k.startswith("netctl")]
        ref = min(general) if general else np.nan
        print(f"\n## {kind} ({size:.0f} MB)\n\n| reader | wall s | CPU s | wall ratio to "
              "fastest general reader |\n|---|---|---|---|")
        for name, (t, c) in best.items():
            print(f"| {name} | {t:.2f} | {c:.2f} | {t / ref:.2f} |", flush=True)

if __name__ == "__main__":
    main()
