"""check's smallest fix with an actuator column (30% false), 10^5 and 10^6 states.

Run by hand, once per tree, alternating (before, after, before, after)::

    python3 benchmarks/bench_check_barred.py /path/to/tree [n ...]

Directed Erdos-Renyi, ``n`` states, ``3 n`` links (random start 0), inputs on 0.1% of the
states (a failing design, as ``check FILE --inputs ...``), 30% of the states barred by
the node table. Two networks: ``plain`` as drawn, and ``cycles``, where 2% of the states
are re-wired into source cycles of 2-4 states (their in-links from the rest removed,
their out-links kept), so that many unreached source components hold no unmatched state
and the extra-column search has work to do. Timed: ``controllability(s,
dimension=False)`` (the Lin test and the fix; Hosoe's dimension is another matter), CPU
seconds (``time.process_time``), median of 5 warm calls after one untimed; prints the
fix size, how many of the fix's states the column bars, and the source components.
"""

__all__: list[str] = []

import os
import sys
import time
import warnings

sys.path.insert(0, sys.argv[1])
import numpy as np  # noqa: E402
import scipy.sparse as sp  # noqa: E402

from netctl import StructuredSystem  # noqa: E402
from netctl.structural import controllability  # noqa: E402

sys.path.insert(1, os.path.dirname(os.path.abspath(__file__)))  # the shared network
from _networks import barred_check_network as network  # noqa: E402

for n in [int(float(a)) for a in sys.argv[2:]] or [10**5, 10**6]:
    for cycles in (False, True):
        src, dst = network(n, cycles)
        rng = np.random.default_rng(1)
        barred = rng.random(n) < 0.3
        driven = rng.choice(n, n // 1000, replace=False)
        B = sp.csr_array((np.ones(driven.size), (driven, np.arange(driven.size))),
                         shape=(n, driven.size))
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            s = StructuredSystem.from_edges(src, dst, n_states=n,
                                            nodes={"actuator": ~barred}).with_inputs(B)
        r = controllability(s, dimension=False)  # warm-up (compiled kernels)
        ts = []
        for _ in range(5):
            t = time.process_time()
            r = controllability(s, dimension=False)
            ts.append(time.process_time() - t)
        fix = r.fix
        print(f"{sys.argv[1]} n={n} {'cycles' if cycles else 'plain'}: median CPU "
              f"{np.median(ts):.3f} s, fix {fix.size}, barred {int(barred[fix].sum())}",
              flush=True)
