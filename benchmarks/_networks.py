"""Generated networks more than one benchmark times (invented data, fixed random start).

``barred_check_network(n, cycles)``: directed Erdős–Rényi, ``n`` states, ``3 n`` links
(random start 0); with ``cycles``, 2 % of the states re-wired into source cycles of 2-4
states (their in-links from the rest removed, their out-links kept), so that many
unreached source components hold no unmatched state. Used by bench_check_barred.py and
bench_kernels.py (the same draws in both).
"""

from __future__ import annotations

import numpy as np

__all__ = ["barred_check_network"]


def barred_check_network(n: int, cycles: bool) -> tuple[np.ndarray, np.ndarray]:
    """Sources and targets of the links (see the module docstring)."""
    rng = np.random.default_rng(0)
    src = rng.integers(0, n, 3 * n)
    dst = rng.integers(0, n, 3 * n)
    if cycles:
        ring_states = rng.permutation(n)[: n // 50]
        keep = ~np.isin(dst, ring_states)
        src, dst = src[keep], dst[keep]
        pos = 0
        rs, rd = [], []
        while pos < ring_states.size:
            k = int(rng.integers(2, 5))
            ring = ring_states[pos:pos + k]
            pos += k
            rs.append(ring)
            rd.append(np.roll(ring, -1))
        src = np.concatenate([src, *rs])
        dst = np.concatenate([dst, *rd])
    return src, dst
