"""Redraw ``notebook_map.svg``, the picture of the notebook view in PYTHON.md.

    python3 docs/build_notebook_map.py

The scenario is the invented greenhouse of ``examples/greenhouse_map.py`` (no real
greenhouse): its states sit at the floor-plan coordinates given there, so the picture
needs no layout and is the same on every machine. The cell it shows is::

    netctl.controllability(system.with_inputs(["boiler", "misting_line"]))

and the picture is that result's notebook map (``result._repr_html_()`` draws the same
SVG below its table). ``tests/viz/test_small_map_views.py`` checks that the committed
file equals what this script writes.
"""

from __future__ import annotations

import importlib.util
import sys
from pathlib import Path
from typing import Any

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
OUT = HERE / "notebook_map.svg"


def _greenhouse() -> Any:
    """The example's module (its ``LINKS`` and floor ``PLAN``)."""
    spec = importlib.util.spec_from_file_location("greenhouse_map",
                                                  ROOT / "examples" / "greenhouse_map.py")
    assert spec is not None and spec.loader is not None
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def notebook_map() -> str:
    """The SVG text of the picture (no trailing newline)."""
    if str(ROOT) not in sys.path:
        sys.path.insert(0, str(ROOT))
    import netctl
    from netctl import StructuredSystem
    from netctl.tables import system_of
    from netctl.viz.small_map import result_map_html

    g = _greenhouse()
    sources, targets = zip(*g.LINKS)
    names = list(g.PLAN)
    system = StructuredSystem.from_named_edges(
        sources, targets, states=names,
        nodes={"x": [float(g.PLAN[s][0]) for s in names],
               "y": [float(g.PLAN[s][1]) for s in names]}, model="first-order")
    result = netctl.controllability(system.with_inputs(["boiler", "misting_line"]))
    return result_map_html(result, system_of(result))


def main() -> None:
    OUT.write_text(notebook_map() + "\n", encoding="utf-8")
    print("wrote", OUT)


if __name__ == "__main__":
    main()
