"""Every verb, whole process, before and after: the bundled networks and generated ones.

Run by hand (not part of the test suite)::

    python3 benchmarks/bench_verbs.py --before /path/to/old/checkout [--runs 3]
        [--sizes bundled,1e6,1e7] [--work /tmp/netctl-bench] [--yardsticks]

* bundled: every command line of ``tests/golden/cases.py`` (every verb on the four
  bundled networks), with ``--json``;
* ``1e6``: directed Erdős–Rényi, 10^6 states, 3·10^6 links (``netctl generate
  erdos-renyi --mean-degree 6``); ``1e7``: 3·10^6 states, 10^7 links; on each:
  ``inspect``, ``drivers --json``, ``sensors``, ``roles``, and ``check`` twice: with a
  minimum dedicated input set (controllable) and with inputs on the first 100 states
  (not controllable: accessibility groups, dilation and Hosoe's dimension);
* ``--yardsticks`` (large sizes): igraph's reader and bipartite matching, and NumPy's
  reader with SciPy's matching, as whole processes (``yardstick_matching.py``), beside
  ``drivers --json``.

Each command of the two trees runs in turn (before, after, before, after, ...), so every
ratio after/before is taken under the same load; the table gives medians of wall and CPU
seconds (user + system of the child, ``os.wait4``), the median of the per-pair ratios, and
the peak resident set of the after side (``ru_maxrss``); one warm-up run of each side is
not counted. Give ``--after`` a copy of the tree (``git archive``) if you edit while it
runs. Output: a Markdown table.
"""

from __future__ import annotations

import argparse
import os
import platform
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

__all__: list[str] = []

#: Seconds after which one run is stopped and reported as "> timeout" (``--timeout``).
TIMEOUT = 600.0
ONLY: list[str] = []
LARGE = {"1e6": (1_000_000, 6.0), "1e7": (3_000_000, 20.0 / 3.0)}
LARGE_VERBS = (["inspect"], ["drivers", "--json"], ["sensors"], ["roles"])


def run_once(argv: list[str], tree: str | None, cwd: str) -> tuple[float, float, float, int]:
    """Wall s, CPU s, peak MiB and exit status of one whole process (output discarded)."""
    env = dict(os.environ)
    env.pop("PYTHONPATH", None)
    if tree is not None:
        env["PYTHONPATH"] = tree
    t0 = time.perf_counter()
    proc = subprocess.Popen(argv, env=env, cwd=cwd, stdout=subprocess.DEVNULL,
                            stderr=subprocess.DEVNULL)
    while True:
        pid, status, usage = os.wait4(proc.pid, os.WNOHANG)
        if pid:
            break
        if time.perf_counter() - t0 > TIMEOUT:
            proc.kill()
            _, status, usage = os.wait4(proc.pid, 0)
            return float("inf"), float("inf"), usage.ru_maxrss / 1024, -9
        time.sleep(0.02)
    wall = time.perf_counter() - t0
    proc.returncode = os.waitstatus_to_exitcode(status)
    return (wall, usage.ru_utime + usage.ru_stime, usage.ru_maxrss / 1024,
            proc.returncode)


def netctl(args: list[str]) -> list[str]:
    # ``-c`` puts the working directory first on the path: the bundled rows run in this
    # checkout, whose netctl would then shadow the tree named by PYTHONPATH on both sides
    return [sys.executable, "-c", "import sys; sys.path.remove(''); "
            "from netctl.cli import main; raise SystemExit(main())", *args]


Run = tuple[float, float, float, int]


def in_turn(first: tuple[list[str], str | None], second: tuple[list[str], str | None],
            cwd: str, runs: int) -> list[tuple[Run, Run]]:
    """``runs`` pairs of whole processes, ``(argv, tree)`` ``first`` then ``second`` each
    time, after one warm-up of each (not counted: numba's cache, page cache); one pair only
    if the first warm-up passes the timeout."""
    warm = run_once(*first, cwd)
    if warm[0] == float("inf"):
        runs = 1
    run_once(*second, cwd)
    return [(run_once(*first, cwd), run_once(*second, cwd)) for _ in range(runs)]


def medians(rows: list[tuple[Run, Run]]) -> dict[str, float]:
    """Median wall and CPU seconds of sides ``a`` and ``b`` of ``(a, b)`` pairs, the medians
    of the pair-by-pair ratios a/b, and the peak resident MiB of ``a`` (largest)."""
    med = statistics.median
    return {"a wall": med(r[0][0] for r in rows), "a cpu": med(r[0][1] for r in rows),
            "b wall": med(r[1][0] for r in rows), "b cpu": med(r[1][1] for r in rows),
            "ratio wall": med(r[0][0] / r[1][0] for r in rows),
            "ratio cpu": med(r[0][1] / r[1][1] for r in rows),
            "a peak": max(r[0][2] for r in rows)}


def seconds(x: float) -> str:
    return "> timeout" if x == float("inf") else f"{x:.3f}"


def ratio(x: float) -> str:
    return "—" if x != x or x in (float("inf"), 0.0) else f"{x:.2f}"


def pairs(label: str, argv: list[str], before: str, after: str, cwd: str, runs: int,
          baseline_argv: list[str] | None = None) -> str:
    """One table row: ``argv`` under ``after`` against ``baseline_argv`` (default: the same
    under ``before``)."""
    b_argv = baseline_argv or argv
    b_tree = None if baseline_argv else before
    if ONLY and not any(w in label for w in ONLY):
        return f"| {label} | (skipped) |"
    rows = [(a, b) for b, a in in_turn((b_argv, b_tree), (argv, after), cwd, runs)]
    m = medians(rows)
    codes = f"{rows[0][1][3]}/{rows[0][0][3]}"
    return (f"| {label} | {seconds(m['b wall'])} | {seconds(m['a wall'])} "
            f"| {seconds(m['b cpu'])} | {seconds(m['a cpu'])} | {ratio(m['ratio wall'])} "
            f"| {ratio(m['ratio cpu'])} | {m['a peak']:.0f} | {codes} |")


def generate(work: Path, size: str, after: str) -> tuple[Path, Path, int]:
    n, k = LARGE[size]
    csv = work / f"er{size}.csv"
    bip = work / f"er{size}.bip"
    if not csv.exists():
        subprocess.run(netctl(["generate", "erdos-renyi", str(csv), "--nodes", str(n),
                               "--mean-degree", repr(k), "--seed", "1"]),
                       env={**os.environ, "PYTHONPATH": after}, check=True,
                       stdout=subprocess.DEVNULL)
    pairs_csv = work / f"er{size}.pairs.csv"
    if not bip.exists() or not pairs_csv.exists():
        # the links alone (no header, no single-name lines): NumPy's reader for the SciPy
        # yardstick, and igraph's own format, already the bipartite graph of A
        with open(csv) as src, open(pairs_csv, "w") as out, open(bip, "w") as ig_out:
            for line in src:
                u, sep, v = line.strip().partition(",")
                if sep and u.isdigit():
                    out.write(f"{u},{v}\n")
                    ig_out.write(f"{u} {int(v) + n}\n")
    return csv, bip, n


def check_inputs(work: Path, size: str, csv: Path, after: str) -> dict[str, Path]:
    """Input files for ``check``: a minimum dedicated set and the first 100 states."""
    drivers = work / f"er{size}.drivers.txt"
    few = work / f"er{size}.first100.txt"
    if not drivers.exists():
        code = ("import sys; from netctl.io import read; from netctl.structural import "
                "minimum_inputs; s = read(sys.argv[1]); d = minimum_inputs(s, dedicated=True); "
                "open(sys.argv[2], 'w').write('\\n'.join(d.names(d.drivers)) + '\\n'); "
                "open(sys.argv[3], 'w').write('\\n'.join(s.state_names[:100]) + '\\n')")
        subprocess.run([sys.executable, "-c", code, str(csv), str(drivers), str(few)],
                       env={**os.environ, "PYTHONPATH": after}, check=True)
    return {"minimum dedicated set": drivers, "first 100 states": few}


def main() -> None:
    global TIMEOUT, ONLY
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--before", required=True, help="checkout to compare against")
    ap.add_argument("--after", default=str(ROOT))
    ap.add_argument("--runs", type=int, default=3)
    ap.add_argument("--sizes", default="bundled,1e6,1e7")
    ap.add_argument("--work", default="/tmp/netctl-bench")
    ap.add_argument("--yardsticks", action="store_true")
    ap.add_argument("--timeout", type=float, default=TIMEOUT, help="seconds a run may take")
    ap.add_argument("--only", default="", help="comma-separated words a row label must hold")
    args = ap.parse_args()
    TIMEOUT = args.timeout
    ONLY = [w for w in args.only.split(",") if w]
    work = Path(args.work)
    work.mkdir(parents=True, exist_ok=True)
    sizes = args.sizes.split(",")
    print(f"Machine: {platform.machine()}, {os.cpu_count()} cores, Python "
          f"{platform.python_version()}, load average {os.getloadavg()[0]:.1f} at start; "
          f"date {time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())}\n")
    print("| command | before wall s | after wall s | before cpu s | after cpu s | ratio wall "
          "| ratio cpu | after peak MiB | exit before/after |")
    print("|---|---|---|---|---|---|---|---|---|")
    if "bundled" in sizes:
        from tests.golden.cases import CASES

        for case, argv in CASES.items():
            print(pairs(case, netctl([*argv, "--json"]), args.before, args.after,
                        str(ROOT), args.runs), flush=True)
    for size in sizes:
        if size not in LARGE:
            continue
        csv, bip, n = generate(work, size, args.after)
        for verb in LARGE_VERBS:
            print(pairs(f"{' '.join(verb)} ER {size}", netctl([verb[0], str(csv), *verb[1:]]),
                        args.before, args.after, str(work), args.runs), flush=True)
        for label, names in check_inputs(work, size, csv, args.after).items():
            print(pairs(f"check --inputs ({label}) ER {size}",
                        netctl(["check", str(csv), "--inputs", str(names)]),
                        args.before, args.after, str(work), args.runs), flush=True)
        if args.yardsticks:
            ours = netctl(["drivers", str(csv), "--json"])
            yard = str(ROOT / "benchmarks" / "yardstick_matching.py")
            print(pairs(f"drivers --json ER {size} vs igraph read + matching", ours,
                        args.before, args.after, str(work), args.runs,
                        baseline_argv=[sys.executable, yard, "igraph", str(bip), str(n)]),
                  flush=True)
            print(pairs(f"drivers --json ER {size} vs numpy read + scipy matching", ours,
                        args.before, args.after, str(work), max(1, args.runs - 2),
                        baseline_argv=[sys.executable, yard, "scipy",
                                       str(work / f"er{size}.pairs.csv"), str(n)]), flush=True)


if __name__ == "__main__":
    main()
