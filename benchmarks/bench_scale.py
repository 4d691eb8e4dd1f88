"""End to end at scale: 10^7 links through inspect / drivers / check / roles, and batches.

Run by hand (not part of the test suite)::

    python3 benchmarks/bench_scale.py e2e   --links 10000000 --nodes 3000000
    python3 benchmarks/bench_scale.py raw   --links 10000000 --nodes 3000000 --match-links 1000000
    python3 benchmarks/bench_scale.py batch --tasks 64 --workers 2 --batch-links 300000
    python3 benchmarks/bench_scale.py compare --samples 4 --workers 2

``e2e`` generates a directed random network (uniform random link ends, no self-loops,
no repeated links; states without links written as single-name lines so nothing is
lost), writes it as a text edge list and as ``.npz``, then runs every verb in a fresh
child process through :func:`netctl.cli.main` (the user's path) and reports wall time,
its split into reading (``load_system``), analysis and output (``emit``), and the
child's peak resident memory (``getrusage`` ``ru_maxrss``; one child per stage, so each
figure is that stage's own peak).

``raw`` times the raw library calls the stages stand on, each in its own child: text
parsing with ``numpy.loadtxt``, ``numpy.load`` of the arrays, strongly connected
components with ``scipy.sparse.csgraph.connected_components`` against netctl's wrapper,
netctl's matching at full size, and netctl's matching against
``scipy.sparse.csgraph.maximum_bipartite_matching`` (Hopcroft–Karp) on a smaller network.

``batch`` writes ``--tasks`` network files and runs ``netctl batch --task drivers`` once
serially and once on ``--workers`` local processes; the target is parallel time within
1.3x of serial time / workers.

Every mode prints a JSON document and a Markdown table; the load (``uptime``) is printed
beside the figures because the machine is shared.
"""

from __future__ import annotations

import argparse
import contextlib
import io
import json
import os
import platform
import resource
import subprocess
import sys
import time
from pathlib import Path
from typing import Any

import numpy as np

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent


def uptime() -> str:
    try:
        return subprocess.run(["uptime"], capture_output=True, text=True).stdout.strip()
    except OSError:  # pragma: no cover
        return "n/a"


def peak_mib() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


def git_state() -> dict[str, str]:
    def run(*a: str) -> str:
        return subprocess.run(["git", *a], cwd=ROOT, capture_output=True, text=True).stdout.strip()
    return {"head": run("rev-parse", "--short", "HEAD"),
            "io_commit": run("log", "-1", "--format=%h %s", "--", "netctl/io"),
            "io_dirty": run("status", "--short", "--", "netctl/io")}


# ---------------------------------------------------------------------- generation
def random_links(n_links: int, n_nodes: int, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """Uniform random link ends, self-loops and repeats removed (topped up to n_links)."""
    rng = np.random.default_rng(seed)
    keys = np.zeros(0, np.int64)
    while keys.size < n_links:
        need = int((n_links - keys.size) * 1.01) + 16
        s = rng.integers(0, n_nodes, need, dtype=np.int64)
        t = rng.integers(0, n_nodes, need, dtype=np.int64)
        k = s[s != t] * n_nodes + t[s != t]
        keys = np.unique(np.concatenate([keys, k]))
    keys = rng.permutation(keys)[:n_links]
    return keys // n_nodes, keys % n_nodes


def write_text(path: Path, src: np.ndarray, dst: np.ndarray, n_nodes: int) -> None:
    """'u v' lines, then one line per state without links (benchmark helper)."""
    tmp = path.with_suffix(path.suffix + ".tmp")
    block = 1 << 20
    with open(tmp, "w") as fh:
        for a in range(0, src.size, block):
            s, t = src[a:a + block], dst[a:a + block]
            fh.write("\n".join(f"{u} {v}" for u, v in zip(s.tolist(), t.tolist())) + "\n")
        linked = np.zeros(n_nodes, bool)
        linked[src] = True
        linked[dst] = True
        lonely = np.flatnonzero(~linked)
        if lonely.size:
            fh.write("\n".join(map(str, lonely.tolist())) + "\n")
    os.replace(tmp, path)


def write_npz(path: Path, src: np.ndarray, dst: np.ndarray, n_nodes: int) -> str:
    """Through netctl's own .npz writer when the format exists, else plain arrays."""
    from netctl.io import FORMATS

    if "npz" in FORMATS and FORMATS["npz"][1] is not None:
        from netctl import StructuredSystem
        from netctl.io import write

        write(StructuredSystem.from_edges(src, dst, n_nodes), path, "npz")
        return "netctl.io.write(..., 'npz')"
    np.savez(path, sources=src, targets=dst, n_states=np.int64(n_nodes))
    return "numpy.savez (netctl has no npz format yet)"


def prepare(directory: Path, n_links: int, n_nodes: int, seed: int = 1) -> dict[str, Any]:
    directory.mkdir(parents=True, exist_ok=True)
    text = directory / f"net-{n_links}.txt"
    npz = directory / f"net-{n_links}.npz"
    info: dict[str, Any] = {"text": str(text), "npz": str(npz)}
    if not (text.exists() and npz.exists()):
        t = time.perf_counter()
        src, dst = random_links(n_links, n_nodes, seed)
        write_text(text, src, dst, n_nodes)
        info["npz_writer"] = write_npz(npz, src, dst, n_nodes)
        info["generate_seconds"] = time.perf_counter() - t
    info["text_bytes"] = text.stat().st_size
    return info


# ---------------------------------------------------------------------- child stages
def _read_any(path: str) -> Any:
    """netctl.io.read, or the plain-arrays fallback for .npz when netctl lacks the format."""
    from netctl.io import FORMATS, read

    if path.endswith(".npz") and "npz" not in FORMATS:
        return _load_npz_fallback(path)
    return read(path)


def _load_npz_fallback(path: str) -> Any:
    from netctl import StructuredSystem

    with np.load(path) as z:
        return StructuredSystem.from_edges(z["sources"], z["targets"], int(z["n_states"]))


def stage_cli(verb: str, file: str, extra: list[str]) -> dict[str, Any]:
    """Run one verb through netctl.cli.main with timers around reading and output."""
    import netctl.cli as cli
    from netctl.io import FORMATS

    timers = {"read": 0.0, "emit": 0.0}
    real_load, real_emit = cli.load_system, cli.emit
    use_fallback = file.endswith(".npz") and "npz" not in FORMATS

    def load(args: argparse.Namespace) -> Any:
        t = time.perf_counter()
        if use_fallback:
            from netctl.models import apply_model
            s = apply_model(_load_npz_fallback(args.file), args.model)
        else:
            s = real_load(args)
        timers["read"] += time.perf_counter() - t
        return s

    def emit(*a: Any, **k: Any) -> None:
        t = time.perf_counter()
        real_emit(*a, **k)
        timers["emit"] += time.perf_counter() - t

    cli.load_system, cli.emit = load, emit
    argv = [verb, file, *extra]
    if use_fallback:
        argv += ["--format", "edgelist"]  # never used: load_system is replaced above
    out = io.StringIO()
    t0 = time.perf_counter()
    with contextlib.redirect_stdout(out):
        code = cli.main(argv)
    total = time.perf_counter() - t0
    return {"verb": verb, "file": file, "exit": code, "seconds": total,
            "read_seconds": timers["read"], "emit_seconds": timers["emit"],
            "analysis_seconds": total - timers["read"] - timers["emit"],
            "peak_mib": peak_mib(), "stdout_chars": len(out.getvalue()),
            "npz_fallback": use_fallback}


def stage_roles_api(file: str) -> dict[str, Any]:
    """Node and link roles through the API, counts only (what ``batch --task roles``
    reports), without building the per-link JSON of the roles verb."""
    from netctl.structural.roles import link_roles, node_roles

    t0 = time.perf_counter()
    system = _read_any(file)
    t1 = time.perf_counter()
    nr = node_roles(system)
    t2 = time.perf_counter()
    lr = link_roles(system)
    t3 = time.perf_counter()
    return {"verb": "roles (API, counts)", "file": file, "read_seconds": t1 - t0,
            "node_roles_seconds": t2 - t1, "link_roles_seconds": t3 - t2,
            "seconds": t3 - t0, "analysis_seconds": t3 - t1, "emit_seconds": 0.0,
            "nodes": nr.counts(), "links": lr.counts(), "peak_mib": peak_mib()}


def stage_prep_inputs(file: str, names_out: str) -> dict[str, Any]:
    """Driver names of a minimum input design, one a line (for the check stage)."""
    from netctl.structural import minimum_inputs

    system = _read_any(file)
    d = minimum_inputs(system)
    Path(names_out).write_text("\n".join(d.driver_names) + "\n")
    return {"n_drivers": int(d.drivers.size), "n_inputs": d.n_inputs, "peak_mib": peak_mib()}


def _csr_from_npz(file: str) -> Any:
    import scipy.sparse as sp

    with np.load(file) as z:
        if "sources" in z:
            s, t, n = z["sources"], z["targets"], int(z["n_states"])
        else:  # netctl's own npz layout: read it through netctl
            from netctl.io import read
            A = read(file).A
            return A
    A = sp.csr_array((np.ones(s.size), (t, s)), shape=(n, n))
    A.sum_duplicates()
    A.indptr = A.indptr.astype(np.int64)
    A.indices = A.indices.astype(np.int64)
    return A


def _warm_up() -> None:
    """Load the compiled kernels on a tiny graph so that timings exclude it."""
    from netctl.graph.components import strongly_connected_components
    from netctl.graph.matching import maximum_matching

    indptr, indices = np.array([0, 1, 1], np.int64), np.array([1], np.int64)
    maximum_matching(indptr, indices, 2)
    strongly_connected_components(indptr, indices)


def stage_raw(kind: str, file: str, extra: list[str]) -> dict[str, Any]:
    out: dict[str, Any] = {"raw": kind}
    if kind == "loadtxt":
        t = time.perf_counter()
        arr = np.loadtxt(file, dtype=np.int64, ndmin=2, usecols=(0, 1), comments="#")
        out["seconds"] = time.perf_counter() - t
        out["rows"] = int(arr.shape[0])
        out["note"] = "single-name lines make loadtxt fail; run on the links-only copy"
    elif kind == "npz":
        t = time.perf_counter()
        with np.load(file) as z:
            arrays = {k: z[k] for k in z.files}
        out["seconds"] = time.perf_counter() - t
        out["arrays"] = {k: list(v.shape) for k, v in arrays.items()}
    elif kind == "scc":
        from scipy.sparse.csgraph import connected_components

        from netctl.graph.components import strongly_connected_components

        A = _csr_from_npz(file)
        _warm_up()
        t = time.perf_counter()
        k1, _ = connected_components(A, directed=True, connection="strong")
        out["scipy_seconds"] = time.perf_counter() - t
        t = time.perf_counter()
        k2, _ = strongly_connected_components(A.indptr, A.indices)
        out["netctl_seconds"] = time.perf_counter() - t
        out["components"] = [int(k1), int(k2)]
    elif kind == "match-full":
        from netctl.graph.matching import maximum_matching

        A = _csr_from_npz(file)
        _warm_up()
        t = time.perf_counter()
        rm, _ = maximum_matching(A.indptr, A.indices, A.shape[0])
        out["netctl_seconds"] = time.perf_counter() - t
        out["matching_size"] = int(np.count_nonzero(rm >= 0))
    elif kind == "match-vs-scipy":
        import scipy.sparse as sp
        from scipy.sparse.csgraph import maximum_bipartite_matching

        from netctl.graph.matching import maximum_matching

        n_links, n_nodes = int(extra[0]), int(extra[1])
        s, d = random_links(n_links, n_nodes, seed=3)
        A = sp.csr_array((np.ones(s.size), (d, s)), shape=(n_nodes, n_nodes))
        A.indptr = A.indptr.astype(np.int64)
        A.indices = A.indices.astype(np.int64)
        _warm_up()
        t = time.perf_counter()
        rm, _ = maximum_matching(A.indptr, A.indices, n_nodes)
        out["netctl_seconds"] = time.perf_counter() - t
        t = time.perf_counter()
        m = maximum_bipartite_matching(sp.csr_matrix(A), perm_type="column")
        out["scipy_seconds"] = time.perf_counter() - t
        out["sizes"] = [int(np.count_nonzero(rm >= 0)), int(np.count_nonzero(m >= 0))]
        out["links"], out["nodes"] = n_links, n_nodes
    out["peak_mib"] = peak_mib()
    return out


#: address-space cap of every child (protects the shared machine; the target is 24 GiB)
CHILD_LIMIT_BYTES = 20 * 1024**3


def _limit() -> None:
    resource.setrlimit(resource.RLIMIT_AS, (CHILD_LIMIT_BYTES, CHILD_LIMIT_BYTES))


def child(args: list[str]) -> dict[str, Any]:
    """Run ``bench_scale.py _stage ...`` in a fresh process; parse its last JSON line."""
    cmd = [sys.executable, str(Path(__file__).resolve()), "_stage", *args]
    r = subprocess.run(cmd, capture_output=True, text=True, cwd=ROOT, preexec_fn=_limit,
                       env=dict(os.environ, PYTHONPATH=str(ROOT)))
    if r.returncode != 0:
        return {"failed": " ".join(args), "stderr": r.stderr[-2000:]}
    return json.loads(r.stdout.strip().splitlines()[-1])


# ---------------------------------------------------------------------- modes
def mode_e2e(a: argparse.Namespace) -> dict[str, Any]:
    d = Path(a.dir)
    info = prepare(d, a.links, a.nodes)
    res: dict[str, Any] = {"prepare": info, "uptime_before": uptime(), "git": git_state(),
                           "stages": []}
    for source in ("text", "npz"):
        f = info[source]
        names = d / f"drivers-{source}.txt"
        for verb, extra in (("inspect", []), ("drivers", []), ("roles", [])):
            r = child(["cli", verb, f, *extra])
            r["source"] = source
            res["stages"].append(r)
            print(json.dumps(r), file=sys.stderr)
        r = child(["roles-api", f])
        r["source"] = source
        res["stages"].append(r)
        print(json.dumps(r), file=sys.stderr)
        res[f"prep_inputs_{source}"] = child(["prep", f, str(names)])
        r = child(["cli", "check", f, "--inputs", str(names), "--no-dimension"])
        r["source"] = source
        res["stages"].append(r)
        print(json.dumps(r), file=sys.stderr)
    res["uptime_after"] = uptime()
    return res


def mode_raw(a: argparse.Namespace) -> dict[str, Any]:
    d = Path(a.dir)
    info = prepare(d, a.links, a.nodes)
    # loadtxt needs two columns on every line: a links-only copy (the lonely-state lines
    # are the last lines of the file)
    links_only = d / f"net-{a.links}-links.txt"
    if not links_only.exists():
        with open(info["text"]) as src, open(links_only, "w") as dst:
            for line in src:
                if " " not in line:
                    break
                dst.write(line)
    res: dict[str, Any] = {"uptime_before": uptime(), "raw": []}
    for args in (["loadtxt", str(links_only)], ["npz", info["npz"]], ["scc", info["npz"]],
                 ["match-full", info["npz"]],
                 ["match-vs-scipy", "-", str(a.match_links), str(a.match_links * 3 // 10)]):
        r = child(["raw", *args])
        res["raw"].append(r)
        print(json.dumps(r), file=sys.stderr)
    res["uptime_after"] = uptime()
    return res


def mode_batch(a: argparse.Namespace) -> dict[str, Any]:
    d = Path(a.dir) / f"batch-{a.tasks}x{a.batch_links}"
    d.mkdir(parents=True, exist_ok=True)
    for k in range(a.tasks):
        p = d / f"case{k:03d}.txt"
        if not p.exists():
            s, t = random_links(a.batch_links, a.batch_links * 3 // 10, seed=100 + k)
            write_text(p, s, t, a.batch_links * 3 // 10)
    res: dict[str, Any] = {"uptime_before": uptime(), "tasks": a.tasks,
                           "links_per_task": a.batch_links, "workers": a.workers}
    for label, extra in (("serial", ["--executor", "serial"]),
                         ("local", ["--executor", "local", "--workers", str(a.workers)])):
        cmd = [sys.executable, "-m", "netctl.cli", "batch", str(d), "--task", "drivers",
               "--out", str(Path(a.dir) / f"batch-{label}.csv"), *extra]
        t = time.perf_counter()
        before = resource.getrusage(resource.RUSAGE_CHILDREN)
        r = subprocess.run(cmd, capture_output=True, text=True, cwd=ROOT,
                           env=dict(os.environ, PYTHONPATH=str(ROOT)))
        res[f"{label}_seconds"] = time.perf_counter() - t
        after = resource.getrusage(resource.RUSAGE_CHILDREN)
        res[f"{label}_cpu_seconds"] = (after.ru_utime - before.ru_utime
                                       + after.ru_stime - before.ru_stime)
        res[f"{label}_exit"] = r.returncode
        print(label, res[f"{label}_seconds"], r.stdout.strip().splitlines()[:2],
              file=sys.stderr)
    same = (Path(a.dir) / "batch-serial.csv").read_bytes() == (
        Path(a.dir) / "batch-local.csv").read_bytes()
    res["identical_csv"] = same
    res["target_seconds"] = 1.3 * res["serial_seconds"] / a.workers
    res["ratio_to_ideal"] = res["local_seconds"] / (res["serial_seconds"] / a.workers)
    res["uptime_after"] = uptime()
    return res


def mode_compare(a: argparse.Namespace) -> dict[str, Any]:
    """``netctl compare`` on the big network: K configuration-model samples on W workers."""
    d = Path(a.dir)
    info = prepare(d, a.links, a.nodes)
    res: dict[str, Any] = {"uptime_before": uptime(), "samples": a.samples,
                           "workers": a.workers}
    cmd = [sys.executable, "-m", "netctl.cli", "compare", info["npz"], "--samples",
           str(a.samples), "--seed", "1", "--workers", str(a.workers), "--json"]
    t = time.perf_counter()
    r = subprocess.run(cmd, capture_output=True, text=True, cwd=ROOT, preexec_fn=_limit,
                       env=dict(os.environ, PYTHONPATH=str(ROOT)))
    res["seconds"] = time.perf_counter() - t
    res["exit"] = r.returncode
    res["children_peak_mib"] = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024
    if r.returncode == 0:
        out = json.loads(r.stdout)
        res.update({k: out[k] for k in ("n_states", "n_links", "observed_n_inputs",
                                        "null_mean", "null_std", "z_score",
                                        "predicted_fraction", "observed_fraction")})
    else:
        res["stderr"] = r.stderr[-2000:]
    res["uptime_after"] = uptime()
    return res


def main() -> None:
    if len(sys.argv) > 1 and sys.argv[1] == "_stage":
        kind, rest = sys.argv[2], sys.argv[3:]
        if kind == "cli":
            r = stage_cli(rest[0], rest[1], rest[2:])
        elif kind == "roles-api":
            r = stage_roles_api(rest[0])
        elif kind == "prep":
            r = stage_prep_inputs(rest[0], rest[1])
        else:
            r = stage_raw(rest[0], rest[1], rest[2:])
        print(json.dumps(r))
        return
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("mode", choices=["e2e", "raw", "batch", "compare"])
    p.add_argument("--samples", type=int, default=4)
    p.add_argument("--links", type=int, default=10_000_000)
    p.add_argument("--nodes", type=int, default=3_000_000)
    p.add_argument("--match-links", type=int, default=1_000_000)
    p.add_argument("--tasks", type=int, default=64)
    p.add_argument("--workers", type=int, default=2)
    p.add_argument("--batch-links", type=int, default=300_000)
    p.add_argument("--dir", default="/tmp/netctl-scale")
    a = p.parse_args()
    res = {"mode": a.mode, "python": platform.python_version(), "date": time.strftime(
        "%Y-%m-%d %H:%M:%S UTC", time.gmtime())}
    res.update({"e2e": mode_e2e, "raw": mode_raw, "batch": mode_batch,
                "compare": mode_compare}[a.mode](a))
    print(json.dumps(res, indent=2))


if __name__ == "__main__":
    main()
