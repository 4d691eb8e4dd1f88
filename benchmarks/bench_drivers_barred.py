"""minimum_inputs at 10^6 states with and without an actuator column (30% false).

Run by hand, once per tree, alternating (before, after, before, after)::

    python3 benchmarks/bench_drivers_barred.py /path/to/tree

Directed Erdos-Renyi, 10^6 states, 3*10^6 links (random start 0); CPU seconds
(``time.process_time``), median of 5 warm calls after one untimed; prints the number of
drivers and how many of them the column bars.
"""

__all__: list[str] = []

import sys, time, warnings
sys.path.insert(0, sys.argv[1])
import numpy as np
from netctl import StructuredSystem
from netctl.structural import minimum_inputs
n = 10**6; m = 3 * 10**6
rng = np.random.default_rng(0)
src = rng.integers(0, n, m); dst = rng.integers(0, n, m)
barred = rng.random(n) < 0.3
with warnings.catch_warnings():
    warnings.simplefilter("ignore")
    plain = StructuredSystem.from_edges(src, dst, n_states=n)
    col = StructuredSystem.from_edges(src, dst, n_states=n, nodes={"actuator": ~barred})
minimum_inputs(plain); minimum_inputs(col)  # warm-up (compiled kernels)
out = []
for name, s in (("no column", plain), ("actuator column, 30% false", col)):
    ts = []
    for _ in range(5):
        t = time.process_time(); d = minimum_inputs(s); ts.append(time.process_time() - t)
    out.append(f"{name}: median CPU {np.median(ts):.3f} s, drivers {d.drivers.size}, barred {int(barred[d.drivers].sum())}")
print(sys.argv[1], *out, sep="\n  ")
