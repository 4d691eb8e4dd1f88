"""Every public result shows itself as a table (``to_frame``) and in a notebook
(``_repr_html_``), on a bundled network (networks/heating_loop.csv, invented).

The tables are checked against each result's own ``to_dict()`` (a separate code path that
the CLI's ``--json`` output is pinned on) and joined onto an asset table by name.
"""

from __future__ import annotations

import dataclasses
import html
import sys
from pathlib import Path

import numpy as np
import pytest

import netctl
import netctl.io as nio
from netctl.errors import MissingExtraError
from netctl.models import resolve_model
from netctl.numeric import realize

pd = pytest.importorskip("pandas")

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture(scope="module")
def loop():
    """networks/heating_loop.csv: 12 states, 16 links, 2 disturbances (invented)."""
    return nio.read(ROOT / "networks" / "heating_loop.csv")


def _driven(system):
    return system.with_inputs(netctl.minimum_inputs(system, dedicated=True).driver_names)


def _stable(system):
    """Damped realization with the minimum inputs installed (for the numeric metrics)."""
    s = realize(_driven(system).with_self_loops(), weights="independent", seed=3)
    import scipy.sparse as sp

    shift = abs(np.linalg.eigvals(s.A.toarray()).real).max() + 1.0
    return s._replace(A=s.A - shift * sp.eye_array(s.n_states, format="csr"))


PRODUCERS = {
    "ControllabilityReport": lambda s: netctl.controllability(s.with_inputs(["fuel_valve"])),
    "DecouplingReport": lambda s: netctl.decoupling(
        s.with_inputs(["fuel_valve", "bypass_valve"]).with_regulated(
            {"return_temp": ["return_header"]})),
    # a grid's N-1 over its elements (the bundled island grid, not the heating loop)
    "ElementSweep": lambda s: netctl.element_sweep(resolve_model(
        netctl.io.read("networks/island_grid.m"), None).with_inputs(["1:vel"])),
    "EnergyReport": lambda s: netctl.energy(_stable(s)),
    "ExactControllability": lambda s: netctl.exact_controllability(realize(s, seed=1)),
    "FixedModesReport": lambda s: netctl.fixed_modes(
        s.with_inputs(["fuel_valve", "bypass_valve"]).with_outputs(["storage_tank"]),
        [netctl.Station("boiler", (0,), (0,)), netctl.Station("bypass", (1,), ())]),
    "InputDesign": lambda s: netctl.minimum_inputs(s),
    "LinkRoles": lambda s: netctl.link_roles(s),
    "ModalReport": lambda s: netctl.modal_controllability(_stable(s)),
    "NetworkSummary": lambda s: netctl.summarize(s),
    "NodeRoles": lambda s: netctl.node_roles(s),
    "NullComparison": lambda s: netctl.compare_to_null(s, samples=3, seed=1),
    "Placement": lambda s: netctl.place_inputs(s),
    "RankTest": lambda s: netctl.verify(_driven(s), samples=1).samples[0],
    "StrongInputDesign": lambda s: netctl.minimum_strong_inputs(s),
    "StrongReport": lambda s: netctl.strong_controllability(s.with_inputs(["fuel_valve"])),
    "TransferRank": lambda s: netctl.transfer_rank(
        s.with_inputs(["fuel_valve"]).with_outputs(["storage_tank"])),
    "Verification": lambda s: netctl.verify(_driven(s), samples=1),
}


def _result_classes():
    out = []
    for name in netctl.__all__:
        obj = getattr(netctl, name)
        if (isinstance(obj, type) and dataclasses.is_dataclass(obj) and hasattr(obj, "to_dict")
                and name not in ("StructuredSystem", "Station")):
            out.append(name)
    return out


def test_every_public_result_class_is_covered():
    """A new public result class must get a producer here (and so the checks below)."""
    assert sorted(_result_classes()) == sorted(PRODUCERS)


@pytest.mark.parametrize("name", sorted(PRODUCERS))
def test_to_frame_and_html_work_on_a_bundled_network(name, loop):
    result = PRODUCERS[name](loop)
    assert type(result).__name__ == name
    frame = result.to_frame()
    assert isinstance(frame, pd.DataFrame) and len(frame) >= 1
    d = result.to_dict()
    rows = type(result)._frame_rows
    if rows == "states":
        assert frame["state"].tolist() == list(loop.state_names)
        for f in type(result)._frame_sets:
            idx = getattr(result, f)
            if idx is not None:
                assert frame.loc[frame[f], "state"].tolist() == [
                    loop.state_names[int(i)] for i in np.sort(idx)], f
    elif rows == "links":
        assert len(frame) == result.n_links
    elif rows == "elements":
        assert frame["element"].tolist() == list(result.ids)
        assert frame.loc[frame["breaking"], "element"].tolist() == d["breaking"]
    else:
        assert len(frame) == 1
    for k, v in d.items():  # scalar findings travel with the table
        if isinstance(v, (bool, int, float, str)):
            assert frame.attrs[k] == v, k
    page = result._repr_html_()
    assert page.startswith("<div") and page.endswith("</div>")
    assert html.escape(name) in page and "licensed engineers" in page


def test_frames_agree_with_to_dict(loop):
    """to_dict() is the JSON the CLI prints; the tables must say the same."""
    design = netctl.minimum_inputs(loop)
    f = design.to_frame()
    assert f.loc[f["drivers"], "state"].tolist() == design.to_dict()["drivers"]
    roles = netctl.node_roles(loop)
    f = roles.to_frame()
    assert dict(zip(f["state"], f["role"])) == roles.to_dict()["nodes"]
    links = netctl.link_roles(loop)
    f = links.to_frame()
    assert f[["source", "target", "role"]].to_dict("records") == links.to_dict()["links"]


def test_roles_join_onto_an_asset_table_by_name(loop):
    assets = pd.DataFrame({"name": list(reversed(loop.state_names)),
                           "asset_id": np.arange(loop.n_states)})
    roles = netctl.node_roles(loop).to_frame()
    joined = assets.merge(roles, left_on="name", right_on="state", how="left")
    assert joined["role"].notna().all()
    assert joined.set_index("name")["role"].to_dict() == netctl.node_roles(loop).to_dict()["nodes"]


def test_html_escapes_names():
    s = netctl.StructuredSystem.from_named_edges(["<b>a</b>", "x&y"], ["x&y", "<script>"])
    page = netctl.node_roles(s)._repr_html_()
    assert "<script>" not in page and "&lt;script&gt;" in page and "&lt;b&gt;a" in page


def test_html_cuts_long_lists():
    n = 40
    s = netctl.StructuredSystem.from_edges(np.zeros(n - 1, int), np.arange(1, n), n)  # out-star
    page = netctl.minimum_inputs(s)._repr_html_()
    assert "and 29 more" in page  # 39 leaves need 39 drivers (Liu et al. 2011); 10 shown


def test_missing_pandas_is_one_line_naming_the_extra(loop, monkeypatch):
    monkeypatch.setitem(sys.modules, "pandas", None)
    with pytest.raises(MissingExtraError) as err:
        netctl.node_roles(loop).to_frame()
    msg = str(err.value)
    assert "\n" not in msg and 'netctl[frames]' in msg and "NodeRoles.to_frame()" in msg
    assert isinstance(err.value, ImportError)


def test_importing_netctl_leaves_pandas_unloaded():
    """pandas is an optional extra: imported only when a table is asked for."""
    import os
    import subprocess

    out = subprocess.run([sys.executable, "-c", "import sys, netctl, netctl.io; "
                          "print('pandas' in sys.modules)"], cwd=ROOT, capture_output=True,
                         text=True, check=True, env={**os.environ, "PYTHONPATH": str(ROOT)})
    assert out.stdout.strip() == "False"
