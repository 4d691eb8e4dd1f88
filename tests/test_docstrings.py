"""Every public analysis cites its paper (house style, STYLE.md "Docstrings"; issue 14).

A public analysis is a function listed in the ``__all__`` of a public module of
``netctl.structural``, ``netctl.numeric`` or ``netctl.ensemble`` and defined there. Its
numpydoc docstring must hold a ``References`` section with at least one numbered entry
(``.. [1] ...``). Helpers that compute no published method are listed in NOT_ANALYSES,
each with the reason. The rule itself is the house style (common practice, no source).
"""

from __future__ import annotations

import importlib
import inspect
import pkgutil
import re
from collections.abc import Callable

import pytest

PACKAGES = ("netctl.structural", "netctl.numeric", "netctl.ensemble")

#: Public functions that are not analyses: they build, count or run, and cite nothing.
NOT_ANALYSES: dict[str, str] = {
    "compose": "builds a block system from subsystems; interconnection() is the analysis",
    "apply_change": "builds the changed system; what_if() is the analysis",
    "is_second_order": "checks the node:pos / node:vel naming of states",
    "degree_distribution": "tabulates a degree sequence",
    "degree_sequences": "counts in- and out-degrees",
    "null_sample_inputs": "executor task behind compare_to_null(), which cites the papers",
    "run_tasks": "process executor",
    "spawn_seeds": "seed bookkeeping for the executor",
    "default_workers": "executor setting",
    # site data from the node table (the file readers are in netctl.io.sites)
    "candidates_from_sites": "input handling, not an analysis",
    "sites_from_nodes": "input handling, not an analysis",
    "target_index": "turns target names into state indices",
}

#: Analyses whose modules are being restructured by another change at the same time;
#: strict xfail, so adding their References turns these into failures to remove here.
PENDING: dict[str, str] = {}

_REFERENCES = re.compile(r"^References\n-{10,}\n(?:\s*\n)*\.\. \[1\] \S", re.MULTILINE)


def public_functions() -> dict[str, Callable[..., object]]:
    """``module.name`` -> function, for every public function of the three packages."""
    out: dict[str, Callable[..., object]] = {}
    for pkg_name in PACKAGES:
        pkg = importlib.import_module(pkg_name)
        names = [pkg_name] + [m.name for m in pkgutil.walk_packages(pkg.__path__,
                                                                    pkg_name + ".")]
        for mod_name in names:
            if any(part.startswith("_") for part in mod_name.split(".")):
                continue
            mod = importlib.import_module(mod_name)
            for name in getattr(mod, "__all__", ()):
                obj = getattr(mod, name)
                if inspect.isfunction(obj) and obj.__module__ == mod_name:
                    out[f"{mod_name}.{name}"] = obj
    return out


def has_references(func: Callable[..., object]) -> bool:
    return bool(_REFERENCES.search(inspect.getdoc(func) or ""))


FUNCTIONS = public_functions()
ANALYSES = [
    pytest.param(q, marks=pytest.mark.xfail(strict=True, reason=PENDING[q.rsplit(".", 1)[1]]),
                 id=q) if q.rsplit(".", 1)[1] in PENDING else pytest.param(q, id=q)
    for q in sorted(FUNCTIONS) if q.rsplit(".", 1)[1] not in NOT_ANALYSES
]


def test_the_walk_finds_the_analyses():
    # A walk that found nothing would make the check below vacuous.
    short = {q.rsplit(".", 1)[1] for q in FUNCTIONS}
    for name in ("controllability", "minimum_inputs", "strong_controllability",
                 "contingency_sweep", "energy", "exact_controllability", "compare_to_null"):
        assert name in short, name
    assert len(ANALYSES) >= 30


@pytest.mark.parametrize("qualname", ANALYSES)
def test_public_analysis_has_references(qualname):
    assert has_references(FUNCTIONS[qualname]), (
        f"{qualname}: its docstring needs a numpydoc 'References' section with numbered "
        "entries ('.. [1] Authors, \"Title\", Journal vol:pages, year. doi:...'); say "
        "'from memory' for details not checked against the paper, or list it in "
        "NOT_ANALYSES with the reason if it computes no published method.")


def test_references_rule_rejects_a_docstring_without_entries():
    def bare():
        """Doc.

        References
        ----------
        see the design notes
        """

    def cited():
        """Doc.

        References
        ----------
        .. [1] A. Author, "Title", J. 1:1-2, 2000.
        """

    assert not has_references(bare)
    assert has_references(cited)


def test_target_greedy_says_where_it_comes_from():
    # Gao, Liu, D'Souza & Barabási (2014), Nat. Commun. 5:5415: its greedy is written
    # from memory (the Methods were not available), and the docstring must say so.
    greedy = [f for q, f in FUNCTIONS.items() if q.endswith(".gao_greedy_drivers")]
    assert greedy, "the target-placement greedy (gao_greedy_drivers) was not found"
    doc = inspect.getdoc(greedy[0]) or ""
    assert "10.1038/ncomms6415" in doc
    assert re.search(r"from memory|checked against the paper", doc, re.IGNORECASE)
