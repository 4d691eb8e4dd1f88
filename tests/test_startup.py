"""Start-up loads only what is needed (issue 15, goal 1).

Each check runs a fresh interpreter and lists the heavy modules it loaded: ``import
netctl`` and ``netctl --help`` must load none of them; parsing one verb's options must
not load the plotting, optimisation or cluster libraries; a structural verb on a small
file must not load them either. Times are measured by benchmarks/bench_startup.py, not
here (no timed unit tests).
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]

#: never needed to import the package or to print the help
HEAVY = ("numpy", "scipy", "scipy.sparse", "scipy.optimize", "scipy.linalg", "matplotlib",
         "dask", "distributed", "pandapower", "pandas", "numba", "networkx", "igraph")
#: never needed to parse a verb's options or to run a structural verb on a small file
NOT_FOR_A_VERB = ("scipy.optimize", "matplotlib", "dask", "distributed", "pandapower",
                  "pandas", "networkx", "igraph")


def loaded_after(code: str) -> list[str]:
    """Heavy modules present in ``sys.modules`` after running ``code`` in a fresh
    interpreter (the project root first on the path)."""
    probe = (f"import sys\nsys.path.insert(0, {str(ROOT)!r})\n{code}\n"
             "import json\nprint(json.dumps(sorted(m for m in sys.modules if m in "
             f"{HEAVY + NOT_FOR_A_VERB!r})))")
    r = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                       timeout=300, cwd=ROOT)
    assert r.returncode == 0, r.stderr
    return json.loads(r.stdout.strip().splitlines()[-1])


def run_main(argv: list[str]) -> str:
    return ("from netctl.cli import main\nimport contextlib, io\n"
            "with contextlib.redirect_stdout(io.StringIO()), "
            "contextlib.redirect_stderr(io.StringIO()):\n"
            f"    try:\n        main({argv!r})\n    except SystemExit:\n        pass")



def _json_answer(capsys, *argv: str, ok: tuple[int, ...] = (0,)) -> dict:
    """The --json answer of ``netctl *argv`` run in this process (exit status in ``ok``)."""
    from netctl.cli import main

    try:
        code = main([*argv, "--json"])
    except SystemExit as exc:
        code = exc.code or 0
    assert (code or 0) in ok, (argv, code)
    return json.loads(capsys.readouterr().out)


def test_import_netctl_loads_no_heavy_module():
    assert loaded_after("import netctl") == []


def test_public_names_load_on_first_access():
    assert loaded_after("import netctl\nnetctl.__all__\ndir(netctl)\nnetctl.__version__\n"
                        "netctl.NetctlError") == []
    loaded = loaded_after("import netctl\nnetctl.minimum_inputs")
    assert "numpy" in loaded and "numba" not in loaded  # kernels compile on first large call


def test_help_loads_no_heavy_module():
    assert loaded_after(run_main(["--help"])) == []
    assert loaded_after(run_main([])) == []


def test_parsing_any_verb_loads_no_plotting_or_cluster_library():
    from netctl.commands import VERBS

    code = "\n".join(run_main([verb, "--help"]) for verb in VERBS)  # one interpreter
    assert set(loaded_after(code)).isdisjoint(NOT_FOR_A_VERB)


def test_a_verb_on_a_small_file_loads_only_what_it_needs(tmp_path):
    f = tmp_path / "two.csv"
    f.write_text("a,b\nb,c\n")
    for argv in (["drivers", str(f)], ["check", str(f), "--inputs", "a"],
                 ["inspect", str(f)]):
        assert set(loaded_after(run_main(argv))).isdisjoint(NOT_FOR_A_VERB), argv


def test_structural_verbs_on_a_small_file_do_not_load_numba(tmp_path):
    """numba's import and first cache load cost more than the rest of a small run
    (benchmarks/RESULTS.md, start-up): small inputs run the kernels' Python bodies and
    small edge lists are read without the compiled scanner (netctl._jit, io/_edgesmall)."""
    f = tmp_path / "two.txt"
    f.write_text("a b\nb c\n")
    code = "\n".join(run_main(argv) for argv in (
        ["drivers", str(f)], ["check", str(f), "--inputs", "a"], ["inspect", str(f)],
        ["roles", str(f)], ["sensors", str(f)], ["verify", str(f), "--inputs", "a"]))
    assert "numba" not in loaded_after(code)


#: the structural verbs that must not load scipy on a small edge list (issue 15: the
#: import of scipy.sparse, and of scipy.sparse.csgraph with scipy.linalg, cost more than
#: the rest of such a run; benchmarks/RESULTS.md, start-up)
NO_SCIPY_VERBS = (["drivers"], ["sensors"], ["inspect"], ["roles"],
                  ["check", "--inputs", "a"], ["check", "--outputs", "c"],
                  ["drivers", "--dedicated"], ["sensors", "--dedicated"])


def test_structural_verbs_on_a_small_edge_list_load_no_scipy(tmp_path):
    f = tmp_path / "two.txt"
    f.write_text("a b\nb c\n")
    for argv in NO_SCIPY_VERBS:
        code = run_main([argv[0], str(f), *argv[1:]])
        probe = (f"import sys\nsys.path.insert(0, {str(ROOT)!r})\n{code}\n"
                 "print(sorted(m for m in sys.modules if m == 'scipy' "
                 "or m.startswith('scipy.')))")
        r = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                           timeout=300, cwd=ROOT)
        assert r.returncode == 0, r.stderr
        assert r.stdout.strip().splitlines()[-1] == "[]", (argv, r.stdout[-300:])


def test_the_verbs_without_scipy_still_answer(tmp_path, capsys):
    """The same runs in this process give the published answers (a directed path
    a -> b -> c needs one driver, its root, and one sensor, its end: Liu, Slotine &
    Barabási, Nature 473:167-173 (2011), the path example), so the check above cannot
    pass by a verb that stopped early."""
    from netctl.cli import main

    f = tmp_path / "two.txt"
    f.write_text("a b\nb c\n")
    import json as _json

    def run(*argv: str) -> dict:
        try:
            main([*argv, "--json"])
        except SystemExit as exc:
            assert exc.code in (0, None), argv
        return _json.loads(capsys.readouterr().out)

    assert run("drivers", str(f))["drivers"] == ["a"]
    assert run("sensors", str(f))["sensors"] == ["c"]
    assert run("check", str(f), "--inputs", "a")["controllable"] is True
    assert run("inspect", str(f))["structural_rank"] == 2


#: more verbs that must not load scipy on the same two-line edge list ({f}: the file,
#: {d}: a scratch folder; stations: a bundled small plant): the import of scipy.sparse (and of csgraph, which brings
#: scipy.linalg) was most of their run (issue 15, goal 1; benchmarks/RESULTS.md)
NO_SCIPY_MORE = (
    ["strong", "{f}"], ["strong", "{f}", "--inputs", "a"],
    ["strong", "{f}", "--diagonal", "zero"], ["strong", "{f}", "--diagonal", "nonzero"],
    ["node-control", "{f}"], ["node-control", "{f}", "--centrality"],
    ["place", "{f}"], ["place", "{f}", "--sensors"], ["place", "{f}", "--method", "greedy"],
    ["place", "{f}", "--targets", "c"],
    ["whatif", "{f}", "--inputs", "a", "--remove-links", "a->b"],
    ["whatif", "{f}", "--add-links", "c->d", "--remove-nodes", "b"],
    ["convert", "{f}", "{d}/out.csv"], ["convert", "{f}", "{d}/out.toml"],
    ["convert", "{f}", "{d}/out.graphml"], ["convert", "{f}", "{d}/out.json"],
    ["convert", "{f}", "{d}/out.npz"], ["convert", "{f}", "{d}/out.matrix.csv"],
    ["sweep", "{f}", "--inputs", "a"], ["sweep", "{f}", "--attack", "degree"],
    ["generate", "erdos-renyi", "{d}/gen.csv", "--nodes", "3"],
    # a bundled plant of 12 states with its control stations ({n}: networks/)
    ["stations", "{n}/heating_loop.toml", "--stations", "{n}/stations/heating_loop_stations.toml"],
    ["join", "p={f}", "q={f}", "--ties", "{d}/ties.csv"],
)


def _scipy_modules_after(argv: list[str]) -> list[str]:
    probe = (f"import sys\nsys.path.insert(0, {str(ROOT)!r})\n{run_main(argv)}\n"
             "print(sorted(m for m in sys.modules if m == 'scipy' or m.startswith('scipy.')))")
    r = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                       timeout=300, cwd=ROOT)
    assert r.returncode == 0, r.stderr
    return json.loads(r.stdout.strip().splitlines()[-1].replace("'", '"'))


def test_more_verbs_on_a_small_edge_list_load_no_scipy(tmp_path):
    f = tmp_path / "two.txt"
    f.write_text("a b\nb c\n")
    (tmp_path / "ties.csv").write_text("from_system,from_state,to_system,to_state\np,c,q,a\n")
    for argv in NO_SCIPY_MORE:
        args = [a.format(f=f, d=tmp_path, n=ROOT / "networks") for a in argv]
        assert _scipy_modules_after(args) == [], args


def test_the_more_verbs_without_scipy_still_answer(tmp_path, capsys):
    """The same runs give the published answers, so the check above cannot pass by a
    verb that stopped early. The path a -> b -> c driven at a: one input, at its root
    (Liu, Slotine & Barabási, Nature 473:167-173 (2011)); strongly controllable, since a
    forces b and b forces c (zero forcing, Monshizadeh, Zhang & Camlibel, IEEE TAC
    59(9):2562-2567 (2014)); a is in every minimum driver set (control capacity 1, Jia
    & Barabási, Sci. Rep. 3:2354 (2013)); losing a -> b cuts b and c off the input."""
    from netctl.io import read

    f = tmp_path / "two.txt"
    f.write_text("a b\nb c\n")

    def run(*argv: str, ok: tuple[int, ...] = (0,)) -> dict:
        return _json_answer(capsys, *argv, ok=ok)

    assert run("strong", str(f), "--inputs", "a")["strongly_controllable"] is True
    assert run("strong", str(f))["drivers"] == ["a"]
    assert run("node-control", str(f))["capacity"]["capacity"] == {
        "a": 1.0, "b": 0.0, "c": 0.0}
    assert run("place", str(f))["sites"] == ["a"]
    assert run("place", str(f), "--sensors")["sites"] == ["c"]
    w = run("whatif", str(f), "--inputs", "a", "--remove-links", "a->b", ok=(1,))
    assert w["before"]["controllable"] is True and w["after"]["controllable"] is False
    assert w["after"]["fix"] == ["b"]
    for out in ("out.csv", "out.toml", "out.graphml", "out.npz"):
        run("convert", str(f), str(tmp_path / out))
        back = read(tmp_path / out)
        assert back.n_states == 3 and back.n_links == 2, out


#: what each light form of ``map`` and ``report`` must not load on the two-line file
#: (issue 15, goal 1): igraph's import brings matplotlib.pyplot with it, and scipy.sparse
#: with csgraph costs more than the rest of a small run (benchmarks/RESULTS.md, small maps)
NOT_FOR_A_SMALL_MAP = ("scipy", "scipy.sparse", "igraph", "matplotlib", "matplotlib.pyplot",
                       "networkx", "numba", "pandas")
#: a drawn figure needs matplotlib's figure and a canvas, never pyplot nor igraph
NOT_FOR_A_FIGURE = ("scipy", "scipy.sparse", "igraph", "matplotlib.pyplot", "networkx",
                    "numba", "pandas")
#: a report needs neither pyplot nor igraph; an HTML or Markdown report of a small system
#: draws its figures as its own SVG (inline in HTML, files beside the Markdown)
NOT_FOR_A_SMALL_REPORT = ("igraph", "matplotlib.pyplot", "networkx", "numba", "pandas")
#: the HTML or Markdown report of the two-line file: its figures are netctl's own SVG (no
#: matplotlib), and its numeric section and the weakest modes (skipped: no weights) load
#: no scipy.linalg (issue 15, goal 1)
NOT_FOR_A_SMALL_HTML_REPORT = NOT_FOR_A_SMALL_MAP + ("scipy.linalg", "PIL")


def _modules_after(argv: list[str], watch: tuple[str, ...]) -> list[str]:
    probe = (f"import sys\nsys.path.insert(0, {str(ROOT)!r})\n{run_main(argv)}\n"
             f"import json\nprint(json.dumps(sorted(m for m in sys.modules if m in {watch!r})))")
    r = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                       timeout=300, cwd=ROOT)
    assert r.returncode == 0, r.stderr
    return json.loads(r.stdout.strip().splitlines()[-1])


def test_map_without_out_stops_before_loading_the_map_code(tmp_path):
    f = tmp_path / "two.csv"
    f.write_text("a,b\nb,c\n")
    assert _modules_after(["map", str(f)], NOT_FOR_A_SMALL_MAP) == []


@pytest.mark.parametrize("suffix", ["html", "geojson"])
def test_small_interactive_map_and_export_load_no_scipy_igraph_or_matplotlib(tmp_path, suffix):
    f = tmp_path / "two.csv"
    f.write_text("a,b\nb,c\n")
    out = tmp_path / f"m.{suffix}"
    assert _modules_after(["map", str(f), "--out", str(out)], NOT_FOR_A_SMALL_MAP) == []
    assert out.stat().st_size > 0
    # a bundled plant of 12 states without coordinates, with inputs, sensors and
    # disturbances: its audit of the design may load scipy, but its layout needs no
    # igraph, and nothing loads matplotlib or networkx
    plant = ROOT / "networks" / "heating_loop.toml"
    loaded = _modules_after(["map", str(plant), "--out", str(out)], NOT_FOR_A_SMALL_MAP)
    assert set(loaded).isdisjoint({"igraph", "matplotlib", "networkx"}), loaded


@pytest.mark.parametrize("suffix", ["svg", "png", "pdf"])
def test_small_figure_map_loads_no_pyplot_igraph_or_scipy(tmp_path, suffix):
    f = tmp_path / "two.csv"
    f.write_text("a,b\nb,c\n")
    out = tmp_path / f"m.{suffix}"
    # an SVG or PNG map of a small network is netctl's own drawing: not even matplotlib
    watch = NOT_FOR_A_FIGURE + (("matplotlib",) if suffix in ("svg", "png") else ())
    assert _modules_after(["map", str(f), "--out", str(out)], watch) == []
    assert out.stat().st_size > 0


def test_small_markdown_report_loads_no_matplotlib_and_no_scipy(tmp_path):
    """The Markdown report of a small system writes its map and roles chart as netctl's
    own SVG files beside it (linked from the Markdown), so, as for HTML, neither
    matplotlib nor scipy is loaded; the figures are there all the same."""
    f = tmp_path / "two.csv"
    f.write_text("a,b\nb,c\n")
    out = tmp_path / "r.md"
    assert _modules_after(["report", str(f), "--out", str(out)],
                          NOT_FOR_A_SMALL_HTML_REPORT) == []
    text = out.read_text(encoding="utf-8")
    assert "](r.map.svg)" in text and "](r.roles.svg)" in text
    assert "data:image/png" not in text
    for name in ("r.map.svg", "r.roles.svg"):
        assert "\n<svg " in (tmp_path / name).read_text(encoding="utf-8")


def test_small_html_report_loads_no_matplotlib_and_no_scipy(tmp_path):
    """The HTML report of a small system draws its map and roles chart as inline SVG of
    its own, so neither matplotlib nor scipy is loaded; the figures are there all the
    same (two SVG figures, no PNG)."""
    f = tmp_path / "two.csv"
    f.write_text("a,b\nb,c\n")
    out = tmp_path / "r.html"
    loaded = _modules_after(["report", str(f), "--out", str(out)],
                            NOT_FOR_A_SMALL_HTML_REPORT)
    assert loaded == []
    text = out.read_text(encoding="utf-8")
    assert text.count("<svg") == 2 and "data:image/png" not in text


def test_a_json_report_draws_nothing(tmp_path):
    """A JSON report leaves figures out, so it is built without them and matplotlib is
    never loaded; its content is the same as a report built with its figures."""
    f = tmp_path / "two.csv"
    f.write_text("a,b\nb,c\n")
    out = tmp_path / "r.json"
    loaded = _modules_after(["report", str(f), "--out", str(out)],
                            NOT_FOR_A_SMALL_REPORT + ("matplotlib",))
    assert loaded == []
    assert json.loads(out.read_text(encoding="utf-8"))["sections"]

    from netctl.io import read
    from netctl.report import build_report

    plant = read(ROOT / "networks" / "chemical_plant.toml")  # 22 states: every figure
    drawn, bare = build_report(plant), build_report(plant, figures=False)
    assert bare.to_json() == drawn.to_json()
    pngs = [b.png for s in drawn.sections for b in s.blocks if b.kind in ("figure", "map")]
    assert len(pngs) >= 3 and all(p.startswith(b"\x89PNG") for p in pngs)
    assert all(b.png == b"" for s in bare.sections for b in s.blocks)

#: ``compare`` on the two-line edge list with its common options ({f}: the file). The
#: ensemble is tiny, so it runs in the calling process: no worker processes and no
#: compiled kernels warmed for them (numba), and the cavity prediction's root finding
#: needs no scipy.optimize (issue 15, goal 1; benchmarks/RESULTS.md, compare)
COMPARE_SMALL = (
    ["compare", "{f}"], ["compare", "{f}", "--seed", "3"],
    ["compare", "{f}", "--null", "degree", "--samples", "10"],
    ["compare", "{f}", "--null", "swap"], ["compare", "{f}", "--null", "swap", "--seed", "3"],
    ["compare", "{f}", "--terms", "network"], ["compare", "{f}", "--samples", "10"],
)


def test_compare_on_a_small_edge_list_loads_no_scipy_and_no_numba(tmp_path):
    f = tmp_path / "two.txt"
    f.write_text("a b\nb c\n")
    for argv in COMPARE_SMALL:
        args = [a.format(f=f) for a in argv]
        assert _scipy_modules_after(args) == [], args
        assert "numba" not in loaded_after(run_main(args)), args


def test_compare_erdos_renyi_on_a_small_edge_list_loads_no_scipy(tmp_path):
    """The Erdős–Rényi note needs Poisson probabilities: computed in Python, not with
    scipy.stats or scipy.special (whose imports cost more than the rest of the run)."""
    f = tmp_path / "two.txt"
    f.write_text("a b\nb c\n")
    for argv in (["compare", str(f), "--null", "erdos-renyi", "--seed", "3"],
                 ["compare", str(f), "--null", "erdos-renyi", "--samples", "10"]):
        assert _scipy_modules_after(argv) == [], argv
        assert "numba" not in loaded_after(run_main(argv)), argv


def test_compare_on_a_small_edge_list_still_answers(tmp_path, capsys):
    """The same runs give the known answers, so the checks above cannot pass by a verb
    that stopped early. The path a -> b -> c needs one input (Liu, Slotine & Barabási,
    Nature 473:167-173 (2011)), and so does every sample: a configuration-model or swap
    sample of its degrees (out 1, 1, 0; in 0, 1, 1) is the path itself or a -> c with
    a self-loop on b; an Erdős–Rényi sample of 2 links between distinct states of 3
    matches one or two of them, so needs 2 or 1 inputs. The cavity prediction (Liu et
    al. 2011, SI Sec. IV) of these degrees: no core, a third of the states unmatched
    (worked by hand: every excess degree is 0, so H = 1, w1 = 1, and the unmatched
    fraction is P(0) = 1/3 on each side)."""
    from netctl.cli import main

    f = tmp_path / "two.txt"
    f.write_text("a b\nb c\n")
    for extra in ([], ["--null", "swap"], ["--null", "erdos-renyi"], ["--samples", "10"]):
        try:
            main(["compare", str(f), "--seed", "3", "--json", *extra])
        except SystemExit as exc:
            assert (exc.code or 0) == 0, extra
        d = json.loads(capsys.readouterr().out)
        assert d["observed_n_inputs"] == 1
        if extra == ["--null", "erdos-renyi"]:
            assert set(d["samples"]) == {1, 2}, d["samples"]
        else:
            assert d["samples"] == [1] * (10 if extra == ["--samples", "10"] else 100), extra
        assert abs(d["predicted_fraction"] - 1 / 3) < 1e-12
        if extra == ["--null", "erdos-renyi"]:  # the note on the Poisson ensemble ran
            assert any("Erdős–Rényi ensemble" in note for note in d["notes"]), d["notes"]
        assert d["prediction"]["core_out"] == 0.0 and d["prediction"]["core_in"] == 0.0


def test_compare_on_a_small_edge_list_starts_no_worker_machinery(tmp_path):
    """The tiny ensemble runs in the calling process, so neither multiprocessing nor
    concurrent.futures (about 10 ms of imports, sockets included) is loaded."""
    f = tmp_path / "two.txt"
    f.write_text("a b\nb c\n")
    probe = (f"import sys\nsys.path.insert(0, {str(ROOT)!r})\n"
             f"{run_main(['compare', str(f), '--seed', '3'])}\n"
             "print(sorted(m for m in sys.modules if m.startswith(('multiprocessing', "
             "'concurrent.futures'))))")
    r = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                       timeout=300, cwd=ROOT)
    assert r.returncode == 0, r.stderr
    assert r.stdout.strip().splitlines()[-1] == "[]"


#: the numeric and failure verbs on the same two-line edge list ({f}): the import of
#: scipy.sparse and scipy.linalg (through scipy's array-API layer) was most of their run
#: (issue 15, goal 1; benchmarks/RESULTS.md). ``energy`` and ``modes`` on a file without
#: weights are refused (exit 2) before any analysis loads.
NO_SCIPY_NUMERIC = (
    ["verify", "{f}"], ["verify", "{f}", "--inputs", "a"], ["verify", "{f}", "--inputs", "b"],
    ["verify", "{f}", "--inputs", "a,b"], ["verify", "{f}", "--weights", "uniform"],
    ["verify", "{f}", "--weights", "laplacian", "--inputs", "a"],
    ["verify", "{f}", "--weights", "symmetric"], ["verify", "{f}", "--method", "modular"],
    ["secure", "{f}", "--inputs", "a"], ["secure", "{f}", "--inputs", "a,b"],
    ["secure", "{f}", "--outputs", "c"], ["secure", "{f}", "--inputs", "a", "--outputs", "c"],
    ["energy", "{f}"], ["energy", "{f}", "--inputs", "a"],
    ["modes", "{f}"], ["modes", "{f}", "--inputs", "a"],
)


def test_numeric_and_failure_verbs_on_a_small_edge_list_load_no_scipy(tmp_path):
    f = tmp_path / "two.txt"
    f.write_text("a b\nb c\n")
    for argv in NO_SCIPY_NUMERIC:
        args = [a.format(f=f) for a in argv]
        assert _scipy_modules_after(args) == [], args


#: with weights, energy and modes run on NumPy alone up to rank.SMALL_STATES states
#: (netctl/numeric/_small_linalg.py: each step NumPy lacks is checked after the fact and
#: handed to scipy.linalg when not clean, which these well-conditioned cases never need)
WEIGHTED_NUMERIC = (
    ["energy", "{f}", "--weights", "independent"],
    ["energy", "{f}", "--weights", "independent", "--inputs", "a"],
    ["modes", "{f}", "--weights", "independent"],
    ["modes", "{f}", "--weights", "independent", "--inputs", "a"],
    ["energy", "{f}", "--weights", "laplacian"], ["energy", "{f}", "--weights", "symmetric"],
    ["modes", "{f}", "--weights", "symmetric"], ["modes", "{f}", "--weights", "laplacian"],
    # self-loops: a Hurwitz A (Schur form, Lyapunov solves), and the model built on NumPy
    ["energy", "{f}", "--model", "self-loops", "--weights", "independent"],
    ["modes", "{f}", "--model", "self-loops", "--weights", "independent"],
    ["drivers", "{f}", "--model", "self-loops"],
)


def test_weighted_energy_and_modes_on_a_small_edge_list_load_no_scipy(tmp_path):
    f = tmp_path / "two.txt"
    f.write_text("a b\nb c\n")
    for argv in WEIGHTED_NUMERIC:
        args = [a.format(f=f) for a in argv]
        assert _scipy_modules_after(args) == [], args
        assert set(loaded_after(run_main(args))).isdisjoint(NOT_FOR_A_VERB + ("numba",)), args


def test_weighted_energy_and_modes_without_scipy_still_answer(tmp_path, capsys):
    """The runs above give the known answers. The path a -> b -> c driven at a is
    controllable for any nonzero weights (Kalman rank 3), one input suffices at the
    only eigenvalue 0 (geometric multiplicity 1: Yuan et al., Nat. Commun. 4:2447, 2013)
    and a is its driver. A is nilpotent, so not Hurwitz: the Gramian is over T = 1 and
    e^{At} b e_a = b (1, w1 t, w1 w2 t^2 / 2), whence W = int_0^1 of its outer product
    (Kailath, Linear Systems, 1980; the nilpotent exponential is a finite sum), with
    the weight-free ratios W_ab^2 / (W_aa W_bb) = 3/4, W_ac^2 / (W_aa W_cc) = 5/9,
    W_bc^2 / (W_bb W_cc) = 15/16."""
    f = tmp_path / "two.txt"
    f.write_text("a b\nb c\n")
    m = _json_answer(capsys, "modes", str(f), "--weights", "independent", "--inputs", "a")
    x = m["exact_controllability"]
    assert m["verdict"]["key"] == "controllable" and m["n_unreached"] == 0
    assert (x["n_inputs"], x["drivers"], x["verified"]) == (1, ["a"], True)
    e = _json_answer(capsys, "energy", str(f), "--weights", "independent", "--inputs", "a")
    assert e["verdict"]["key"] == "controllable" and e["horizon"] == 1.0
    W = e["gramian"]
    for (i, j), ratio in {(0, 1): 3 / 4, (0, 2): 5 / 9, (1, 2): 15 / 16}.items():
        assert W[i][j] ** 2 / (W[i][i] * W[j][j]) == pytest.approx(ratio, rel=1e-10)


def test_the_numeric_verbs_without_scipy_still_answer(tmp_path, capsys):
    """The same runs give the known answers, so the checks above cannot pass by a verb
    that stopped early. The path a -> b -> c: driven at a it is controllable (Kalman
    rank 3 for any nonzero weights: B, AB, A^2B are the three unit directions up to
    scale), driven at b only b and c are reached (dimension 2; Lin, IEEE TAC
    19(3):201-208, 1974: a is not input-accessible); its one actuator is a single point
    of failure (Commault, Dion & Trinh, IEEE TAC 53(6):1554-1559, 2008: losing it loses
    accessibility of every state). energy and modes refuse a file without weights."""
    from netctl.cli import main

    f = tmp_path / "two.txt"
    f.write_text("a b\nb c\n")

    def run(*argv: str, ok: tuple[int, ...] = (0,)) -> dict:
        return _json_answer(capsys, *argv, ok=ok)

    v = run("verify", str(f), "--inputs", "a")
    assert v["agrees"] is True and [s["dimension"] for s in v["samples"]] == [3, 3, 3]
    v = run("verify", str(f), "--inputs", "b", ok=(1,))
    assert v["structural_dimension"] == 2 and [s["dimension"] for s in v["samples"]] == [2] * 3
    s = run("secure", str(f), "--inputs", "a", ok=(1,))
    assert s["secure"] is False
    el = s["audits"][0]["elements"]["elements"]
    assert [(e["states"], e["class"], e["cut_off"]) for e in el] == [(["a"], "critical", 3)]
    assert s["audits"][0]["fewest_failures"]["value"] == 1
    for verb in ("energy", "modes"):
        for extra in ([], ["--inputs", "a"]):
            try:
                code = main([verb, str(f), *extra])
            except SystemExit as exc:
                code = exc.code
            assert code == 2, (verb, extra)
            assert "carries no weights" in capsys.readouterr().err


def test_the_erdos_renyi_curve_loads_no_scipy_stats(tmp_path):
    """The Erdős–Rényi curve's prediction takes its Poisson degrees from netctl's port
    (equal to scipy.stats bit for bit, tests/test_ensemble_small_paths.py); scipy.stats
    is left to the scale-free mixture. The answer is the curve itself, checked in
    tests/test_curves.py against the published values."""
    out = tmp_path / "c.json"
    argv = ["curve", "--family", "erdos-renyi", "--mean-degrees", "2,4", "--nodes", "200",
            "--samples", "1", "--json", "--out", str(out)]
    assert _modules_after(argv, ("scipy.stats",)) == []
    rows = json.loads(out.read_text(encoding="utf-8"))
    assert rows  # the run got to the end
