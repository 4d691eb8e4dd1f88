"""Actuator placement: the cheapest design that makes a system structurally controllable,
under eligible sites, costs, candidate actuators acting on several states, and a budget.

The solvers and Lin's check are in the private modules of this package (``_design``
picks among ``_assignment``, ``_milp``, ``_cover`` and ``_budget``; ``_loop`` is the
outer loop every placement shares). Convention: edge ``u -> v`` iff ``A[v, u] != 0``;
a dedicated actuator at state ``i`` adds the input column ``e_i`` to ``B``.

Results concern a linear(ized) structural model; they do not replace the operator's
procedures, applicable codes or licensed engineers (see ``netctl.cli.CAUTION``).
"""

from __future__ import annotations

from netctl.records import Candidates, Sites
from netctl.structural.placement._design import place_design
from netctl.structural.placement.result import Placement
from netctl.system import StructuredSystem

__all__ = ["place_inputs"]


def place_inputs(
    system: StructuredSystem,
    *,
    sites: Sites | None = None,
    candidates: Candidates | None = None,
    budget: float | None = None,
    method: str = "auto",
    time_limit: float = 60.0,
    verify: bool = True,
) -> Placement:
    r"""Cheapest actuator design that makes ``system`` structurally controllable.

    Existing inputs of ``system`` are kept and cost nothing; the design adds to them.

    Parameters
    ----------
    system : StructuredSystem
    sites : Sites, optional
        Eligible states and their costs for dedicated actuators (one input each).
        Default: :func:`sites_from_nodes` (every state eligible at unit cost when the
        node table says nothing).
    candidates : Candidates, optional
        Candidate actuators, each one column of ``B`` acting on one or several states,
        with a cost. When given, ``sites`` is ignored.
    budget : float, optional
        Largest total cost allowed. When the cheapest controlling design costs more, the
        result is the affordable design with the largest generic controllable dimension
        (``best_effort=True``, ``goal_met=False``).
    method : {"auto", "exact", "greedy"}
        ``"auto"``: exact where the problem allows (always for dedicated actuators; the
        MILP up to :data:`~netctl.structural.placement.MILP_MAX_VARIABLES`; exhaustive best effort up to
        :data:`~netctl.structural.placement.EXHAUSTIVE_MAX_CANDIDATES`), greedy beyond. ``"exact"`` forces the exact
        method whatever the size (it may take long); ``"greedy"`` forces the greedy.
    time_limit : float, default 60
        Seconds HiGHS may spend on the MILP; when reached, its best design is returned
        with the proven gap.
    verify : bool, default True
        Check the design independently with
        :func:`netctl.structural.controllability`.

    Returns
    -------
    Placement
        ``feasible=False`` (with ``reasons`` naming the states and why) when no design
        within the sites / candidates works at any cost.

    Raises
    ------
    OptionError
        Unknown ``method``; negative or non-finite ``budget``; sites of the wrong kind or
        size.

    Notes
    -----
    **Dedicated actuators (exact, polynomial).** A set ``S`` of driven states works iff
    every source component not already reached holds a state of ``S``, and the rows
    outside ``S`` can be matched into the columns of ``[A B]`` (Lin's theorem). Any
    minimal ``S`` is the unmatched set ``U`` of some maximum matching of ``[A B]`` plus
    one state for each source component ``U`` misses, and ``U`` lies in the
    over-determined Dulmage--Mendelsohn block ``D`` (rows some maximum matching leaves
    unmatched). So netctl solves one min-cost assignment on ``D`` only: rows ``D``;
    columns the in-neighbours of ``D`` (cost 0), one private column per eligible
    state (cost ``c_i``: the state is driven) and one column ``s_k`` per unreached
    source component (cost ``c_i - min_{j in N_k} c_j`` from its eligible states: the
    state is driven and also serves the component), plus the constant
    ``sum_k min_{j in N_k} c_j``. This is the min-cost-flow construction of Pequito, Kar &
    Aguiar [1]_ (REFERENCES.md section 3) restricted to ``D``; it is solved by
    :func:`scipy.sparse.csgraph.min_weight_full_bipartite_matching` (LAPJVsp). A
    forbidden site has no column (infinite cost). Infeasible exactly when an unreached
    source component has no eligible state, or the matching of ``[A B]`` plus all
    eligible sites is not row-perfect (a dilation no eligible site can fix; the witness
    set is reported).

    **Candidate actuators (NP-hard in general).** Exact MILP: binary ``y_k`` per
    candidate; continuous ``x_e in [0, 1]`` per edge of the bipartite graph with rows
    ``D`` and columns their in-neighbours, existing inputs and candidates; every row of
    ``D`` matched once (``sum x = 1``), every state column at most once, candidate
    ``k`` at most ``y_k`` times (rank condition; integral for fixed ``y``, the bipartite
    matching polytope); every unreached source component touched by a chosen candidate
    (accessibility, a set cover); minimize ``sum c_k y_k``. Greedy: the function
    ``g(S)`` = term rank of ``[A B B_S]`` + number of source components touched is
    monotone submodular (a transversal-matroid rank plus a coverage function), and the
    design works iff ``g(S) = n + beta``; cost-effectiveness greedy for submodular set
    cover costs at most ``H(max_k g({k}) - g(empty))`` times the optimum (Wolsey [3]_),
    ``H`` the harmonic number. The reported lower bound is the largest of ``cost / H``,
    the cheapest set of candidates restoring the term rank alone (exact: the columns
    raising the rank form a matroid, whose cheapest basis the greedy in cost order
    finds, Edmonds [6]_) and the cheapest candidate touching each unreached source
    component.

    **Best effort under a budget.** For generic weights the controllable subspace of a
    set of input columns is the sum of their Krylov subspaces, so its dimension --
    generically Hosoe's dimension [2]_ -- is monotone submodular in the set of chosen
    columns. Exhaustive search below :data:`~netctl.structural.placement.EXHAUSTIVE_MAX_CANDIDATES` affordable
    candidates; otherwise cost-effectiveness greedy plus the best single candidate,
    which reaches ``(1 - 1/e)/2`` of the optimum under a knapsack budget (Khuller, Moss
    & Naor [4]_; from memory) and ``1 - 1/e`` for equal costs (Nemhauser, Wolsey & Fisher
    [5]_). The reported upper bound is the design's dimension plus the best fractional
    knapsack of single-candidate gains (valid by submodularity), capped by the
    dimension with every candidate.

    One optimum of possibly many; ties are broken by state and candidate order.

    References
    ----------
    .. [1] S. Pequito, S. Kar, A. P. Aguiar, "Minimum cost input/output design for
       large-scale linear structural systems", Automatica 68:384-391, 2016.
       arXiv:1407.3327
    .. [2] S. Hosoe, "Determination of generic dimensions of controllable subspaces and
       its application", IEEE TAC 25(6):1192-1196, 1980.
    .. [3] L. A. Wolsey, "An analysis of the greedy algorithm for the submodular set
       covering problem", Combinatorica 2(4):385-393, 1982.
    .. [4] S. Khuller, A. Moss, J. Naor, "The budgeted maximum coverage problem",
       Information Processing Letters 70(1):39-45, 1999.
    .. [5] G. L. Nemhauser, L. A. Wolsey, M. L. Fisher, "An analysis of approximations
       for maximizing submodular set functions I", Math. Programming 14:265-294, 1978.
    .. [6] J. Edmonds, "Matroids and the greedy algorithm", Math. Programming
       1:127-136, 1971.

    Examples
    --------
    >>> from netctl import StructuredSystem
    >>> from netctl.io.sites import parse_sites
    >>> from netctl.structural.placement import place_inputs
    >>> s = StructuredSystem.from_edges([0, 0], [1, 2], 3, state_names=["a", "b", "c"])
    >>> p = place_inputs(s, sites=parse_sites("state,cost\na,5\nb,2\nc,1", s))
    >>> p.site_names, p.cost, p.optimal        # a feeds both; a and one leaf must be driven
    (['a', 'c'], 6.0, True)
    """
    return place_design(system, "inputs", sites, candidates, budget, method, time_limit,
                        verify)


# ====================================================================== dispatcher
