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
