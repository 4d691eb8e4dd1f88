"""The three ways a design can fall short, worded once for every verb and report.

* ``structural``: uncontrollable for every weight -- the pattern fails Lin's condition
  (an inaccessible state or a dilation); no choice of numbers helps.
* ``numeric``: uncontrollable for these weights -- the pattern is fine, but a numeric
  rank test on these numbers finds a lost direction (symmetry, identical links,
  cancellation).
* ``ill-conditioned``: controllable, but beyond working precision -- the rank test
  finds every direction, yet the hardest one costs so much energy that double
  precision cannot express it (Gramian condition number above ``1/eps``).

Only the first two are failures (exit status 1). The texts below are used verbatim by
``verify``, ``energy``, ``modes``, the report and the README.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

__all__ = ["Verdict", "VERDICTS", "judge", "FAILING", "MARGIN_DECADES", "WEAK_REACH"]

#: verdict key -> the one wording used everywhere
VERDICTS: dict[str, str] = {
    "structural": "uncontrollable for every weight (structural)",
    "numeric": "uncontrollable for these weights (numeric rank test)",
    "ill-conditioned": "controllable but ill-conditioned beyond working precision",
    "controllable": "controllable",
}
#: verdicts that make a verb exit with status 1
FAILING = ("structural", "numeric")
#: a rank decision fewer decades than this above rounding is "close to rounding" (common
#: practice, no published source; the verdict's detail states it)
MARGIN_DECADES = 2.0
#: a mode whose reach (cosine between its left eigenvector and the input space) is below
#: this is reached only beyond working precision (our choice, no published source: about
#: the square root of eps; the verdict's detail states it)
WEAK_REACH = 1e-8


@dataclass(frozen=True)
class Verdict:
    """One verdict and its evidence.

    ``detail``: the numbers behind it (generic dimension; numeric dimension and margin;
    condition number, digits lost and the lower bound on the worst-case energy).
    """

    key: str
    detail: str = ""

    @property
    def text(self) -> str:
        """The fixed wording (:data:`VERDICTS`)."""
        return VERDICTS[self.key]

    @property
    def failing(self) -> bool:
        """Whether the verb exits with status 1."""
        return self.key in FAILING

    def line(self) -> str:
        """``verdict: <wording> -- <detail>``."""
        return f"verdict: {self.text}" + (f" -- {self.detail}" if self.detail else "")

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dictionary."""
        return {"key": self.key, "text": self.text, "detail": self.detail,
                "failing": self.failing}


def judge(*, n: int, structural_dimension: int, numeric_dimension: int | None,
          numeric_margin: float | None = None, condition: float | None = None,
          worst_energy_bound: float | None = None, eps: float = 2.220446049250313e-16,
          weakest_reach: float | None = None) -> Verdict:
    """Pick the verdict from the structural dimension, a numeric rank test and (when
    known) the Gramian's condition number or the weakest mode's reach.

    The ill-conditioned verdict rests on a Gramian condition number of at least
    ``1/eps`` (working precision), else on the weakest mode's reach below
    :data:`WEAK_REACH` or a rank margin below :data:`MARGIN_DECADES` -- two thresholds
    of netctl's own choosing, named in the verdict's detail.

    References
    ----------
    .. [1] C.-T. Lin, "Structural controllability", IEEE TAC 19(3):201-208, 1974.
       doi:10.1109/TAC.1974.1100557

    Examples
    --------
    >>> judge(n=3, structural_dimension=2, numeric_dimension=2).text
    'uncontrollable for every weight (structural)'
    >>> judge(n=3, structural_dimension=3, numeric_dimension=3, condition=1e20).key
    'ill-conditioned'
    """
    if structural_dimension < n:
        return Verdict("structural", f"generic controllable dimension {structural_dimension} "
                                     f"of {n}: an inaccessible state or a dilation (Lin 1974)")
    if numeric_dimension is not None and numeric_dimension < n:
        m = "" if numeric_margin is None else f", margin {numeric_margin:.3g} decades"
        return Verdict("numeric", f"numeric controllable dimension {numeric_dimension} of "
                                  f"{n}{m}")
    if condition is not None and condition * eps >= 1.0:
        import math

        digits = math.log10(condition) if math.isfinite(condition) else math.inf
        e = ("" if worst_energy_bound is None else
             f"; the hardest unit target needs energy >= {worst_energy_bound:.3g}")
        return Verdict("ill-conditioned", f"Gramian condition number >= {condition:.3g}, "
                                          f"about {digits:.0f} digits lost of "
                                          f"{-math.log10(eps):.0f}{e}")
    if weakest_reach is not None and weakest_reach < WEAK_REACH:
        return Verdict("ill-conditioned", f"the weakest mode's reach is {weakest_reach:.3g}, "
                                          f"below {WEAK_REACH:g} (netctl's own threshold, "
                                          "no published source): the inputs act on it "
                                          "only at the level of rounding")
    if numeric_margin is not None and numeric_margin < MARGIN_DECADES and condition is None:
        return Verdict("ill-conditioned", f"the rank test finds every direction only "
                                          f"{numeric_margin:.3g} decades above rounding "
                                          f"(threshold {MARGIN_DECADES:g} decades: common "
                                          "practice, no published source)")
    return Verdict("controllable")
