"""Size limits of the dense numeric verbs, said so that a planner can act on them."""

from __future__ import annotations

from netctl.errors import OptionError
from netctl.system import StructuredSystem

__all__ = ["refuse_dense"]


def refuse_dense(system: StructuredSystem, *, what: str, file: str) -> None:
    """Refuse, before any numeric work, a system too large for a dense method (or whose
    weights are too large for its arithmetic, :func:`netctl.numeric.rank.weight_overflow`).

    One line: the size and the limit, why (one dense ``n x n`` matrix of doubles is
    ``8 n^2`` bytes and the method costs O(n^3)), and what to run instead.

    References
    ----------
    .. [1] G. H. Golub, C. F. Van Loan, "Matrix Computations", 4th ed., Johns Hopkins,
       2013: dense Schur decomposition and Lyapunov solvers cost O(n^3) operations on
       n x n arrays (from memory).
    """
    from netctl.errors import InvalidSystemError
    from netctl.numeric.rank import DENSE_LIMIT, weight_overflow

    n = system.n_states
    if n <= DENSE_LIMIT:
        too_large = weight_overflow(system)
        if too_large:
            raise InvalidSystemError(f"{file}: {too_large}")
        return
    grid = system.elements is not None
    per_bus = 2 if system.model.startswith("second-order") else 1
    smaller = (f"a grid of at most {DENSE_LIMIT // per_bus} buses" if grid
               else f"a network of at most {DENSE_LIMIT} states")
    raise OptionError(
        f"{file}: {what} is dense: {n} states would need {8 * n * n / 1e9:.1f} GB for each "
        f"n x n matrix ({n}^2 doubles) and about {float(n) ** 3:.1e} operations; the "
        f"limit is {DENSE_LIMIT} states. Run it on {smaller}, or use netctl verify "
        "(sparse certificate, any size) for controllability and netctl drivers / check "
        "for the structural answers.")
