"""Maslov-Sneppen swaps (S. Maslov, K. Sneppen, Science 296:910-913, 2002) against a
plain implementation on a Python set, attempt for attempt.

netctl's chain keeps its links in an open-addressing hash table with tombstones; the
reference below keeps them in a Python ``set`` and draws the same picks from the same
generator (``integers(0, L, k)`` twice per block of ``k = min(left, max(L, 2**20))``
attempts), so both must take exactly the same swaps. The sparse networks here accept
most swaps, which once filled the table with tombstones until a lookup probed for ever
(``netctl compare --null swap`` hung on 8 links); each case runs in a child process with
a time limit, so a hang fails the test instead of stalling the suite.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

_CHILD = r'''
import sys
import numpy as np
from netctl import _jit
from netctl.ensemble.null import degree_preserving_swaps


def reference(src, dst, n_swaps, seed):
    rng = np.random.default_rng(seed)
    dst = list(dst)
    links = len(src)
    have = set(zip(src, dst))
    accepted, left, block = 0, n_swaps, max(links, 1 << 20)
    while left > 0:
        k = min(left, block)
        pick_i = rng.integers(0, links, k)
        pick_j = rng.integers(0, links, k)
        for i, j in zip(pick_i.tolist(), pick_j.tolist()):
            a, b, c, d = src[i], dst[i], src[j], dst[j]
            if a == c or b == d or a == d or c == b:
                continue
            if (a, d) in have or (c, b) in have:
                continue
            have -= {(a, b), (c, d)}
            have |= {(a, d), (c, b)}
            dst[i], dst[j] = d, b
            accepted += 1
        left -= k
    return dst, accepted


cases = [(18, [(0, 6), (2, 15), (3, 17), (4, 5), (5, 13), (9, 15), (14, 1), (16, 6)],
          479824, None)]  # the network that hung (found by hypothesis)
rng = np.random.default_rng(int(sys.argv[1]))
for _ in range(60):
    n = int(rng.integers(4, 200))
    m = int(rng.integers(2, 2 * n))
    pairs = {(int(u), int(v)) for u, v in rng.integers(0, n, (m, 2)) if u != v}
    if len(pairs) >= 2:
        cases.append((n, sorted(pairs), int(rng.integers(0, 2**32)),
                      int(rng.integers(1, 60 * len(pairs)))))
checked = 0
for n, edges, seed, n_swaps in cases:
    src = [u for u, _ in edges]
    dst = [v for _, v in edges]
    want, want_acc = reference(src, dst, 10 * len(src) if n_swaps is None else n_swaps, seed)
    for mode in (_jit.always_python, _jit.always_compiled):
        with mode():
            s, t, acc = degree_preserving_swaps(np.array(src), np.array(dst), n,
                                                n_swaps=n_swaps, seed=seed)
        assert s.tolist() == src, (n, edges, seed, mode.__name__)
        assert t.tolist() == want and acc == want_acc, (n, edges, seed, n_swaps,
                                                        mode.__name__)
    checked += 1
print(checked)
'''


def test_swaps_equal_a_plain_set_implementation_and_never_hang():
    root = Path(__file__).resolve().parents[1]
    for start in (1, 2):
        out = subprocess.run([sys.executable, "-c", _CHILD, str(start)], cwd=root,
                             capture_output=True, text=True, timeout=300)
        assert out.returncode == 0, out.stderr[-3000:]
        assert int(out.stdout.strip()) >= 50
