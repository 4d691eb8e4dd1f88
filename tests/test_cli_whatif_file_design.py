"""``netctl whatif`` on a system description that declares its own inputs judges that
design (as ``netctl check`` does): the row 'design controllable', the reasons, the fix
and exit 1 when the change breaks it.

Oracle outside netctl: the plant's links, disturbances and valves are read with tomllib
and the verdict after the change is the Kalman rank with random weights over the prime
field GF(1000003) (python-flint's nmod_mat, exact; full rank for almost all weights
exactly when the pattern is structurally controllable, Lin 1974, from memory; a false
"no" has probability at most about n^2 / p by Schwartz-Zippel). The signal tie of
the plant consumes the feed valve (the top analyser sets it: a link from the analysed
state to the valve's state), so the valves that stay free inputs are the ones netctl
reports.
"""

from __future__ import annotations

import json
import tomllib
from pathlib import Path

import numpy as np
import pytest

from netctl.cli import main

PLANT = Path(__file__).resolve().parents[1] / "networks" / "chemical_plant.toml"


def _kalman_after(removed: tuple[str, str], inputs: list[str], seed: int = 3) -> bool:
    import flint

    P = 1_000_003
    spec = tomllib.loads(PLANT.read_text())
    states = [s for s, v in spec["states"].items() if not v.get("disturbance")]
    pos = {s: i for i, s in enumerate(states)}
    n = len(states)
    rng = np.random.default_rng(seed)
    A = [[0] * n for _ in range(n)]
    for u, v in spec["couplings"]["links"]:
        if u in pos and v in pos and (u, v) != removed:
            A[pos[v]][pos[u]] = int(rng.integers(1, P))
    for tie in spec.get("ties", []):  # a signal tie: the sensor's states drive the valve's
        assert tie["kind"] == "signal"
        for u in spec["outputs"][tie["from"][1]]:
            for v in spec["inputs"][tie["to"][1]]:
                A[pos[v]][pos[u]] = int(rng.integers(1, P))
    for s in states:
        if spec["states"][s].get("self"):
            A[pos[s]][pos[s]] = int(rng.integers(1, P))
    B = [[0] * len(inputs) for _ in range(n)]
    for k, name in enumerate(inputs):
        for s in spec["inputs"][name]:
            B[pos[s]][k] = int(rng.integers(1, P))
    Am = flint.nmod_mat(A, P)
    blocks, X = [], flint.nmod_mat(B, P)
    for _ in range(n):
        blocks.append(X)
        X = Am * X
    K = flint.nmod_mat([[int(blk[i, j]) for blk in blocks for j in range(blk.ncols())]
                        for i in range(n)], P)
    return bool(K.rank() == n)


@pytest.mark.parametrize("link", [("reactor_temp", "cooler_temp"),
                                  ("reactor_temp", "preheater_temp")])
def test_file_design_is_judged_after_the_change(link, capsys):
    main(["whatif", str(PLANT), "--remove-links", f"{link[0]}->{link[1]}", "--json"])
    d = json.loads(capsys.readouterr().out)
    # the design netctl judges: the file's valves that stay free inputs
    free = [k for k in tomllib.loads(PLANT.read_text())["inputs"] if k != "feed_valve"]
    want = _kalman_after(link, free)
    assert d["after"]["controllable"] is want
    code = main(["whatif", str(PLANT), "--remove-links", f"{link[0]}->{link[1]}"])
    text = capsys.readouterr().out
    assert code == (0 if want else 1)
    row = next(ln.split() for ln in text.splitlines() if "design controllable" in ln)
    assert row == ["design", "controllable", "yes", "yes" if want else "NO"]
    if not want:
        assert "smallest fix after the change" in text


@pytest.mark.parametrize("option", ["--add-links", "--remove-links"])
def test_link_at_a_disturbance_is_one_clear_error(option, tmp_path, capsys):
    spec = tomllib.loads(PLANT.read_text())
    # a disturbance of the file (tomllib), linked to a state it already acts on
    w = next(s for s, v in spec["states"].items() if v.get("disturbance"))
    v = next(b for a, b in spec["couplings"]["links"] if a == w)
    out = tmp_path / "o.json"
    assert main(["whatif", str(PLANT), option, f"{w}->{v}", "--out", str(out)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "warning" not in err
    assert f"{w!r} in the link {w}->{v} is a disturbance, not a state" in err
    assert not out.exists()
    f = tmp_path / "links.csv"
    f.write_text(f"source,target\n{v},{v}\n{w},{v}\n")
    assert main(["whatif", str(PLANT), option, str(f)]) == 2
    assert f"{f}:3: {w!r}" in capsys.readouterr().err
