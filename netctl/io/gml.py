"""GML (``.gml``): nodes with attributes, edges with weights (read with networkx).

Node labels are the state names; node attributes become the node table; the edge
attribute ``weight`` the link weights. GML has no booleans: ``actuator``/``sensor``
are written as 1/0 and read back as true/false.
"""

from __future__ import annotations

import io
import os
import re

from netctl.io._common import atomic_write, file_error, read_text, refuse_lone_surrogates
from netctl.io._graphs import warn_not_kept
from netctl.io.graphml import graph_to_system, system_to_graph
from netctl.system import StructuredSystem

__all__ = ["read_gml", "write_gml"]


def read_gml(path: str | os.PathLike[str], *, model: str = "given") -> StructuredSystem:
    """Read a GML file (nodes named by ``label``; undirected edges act both ways).

    Raises
    ------
    NetworkFileError
        Malformed GML (with line and column), duplicate labels, nested (list) node
        attributes, non-numeric weights.
    """
    import networkx as nx

    text = read_text(path)
    try:
        g = nx.parse_gml(text, label="label")
    except nx.NetworkXError as exc:
        msg = str(exc)
        m = re.search(r"at \((\d+), (\d+)\)", msg)
        line = int(m.group(1)) if m else None
        raise file_error(path, line, f"malformed GML: {msg}. Check brackets and quotes; "
                         "every node needs an id and a unique label.") from None
    except (ValueError, TypeError, KeyError) as exc:
        raise file_error(path, None, f"not a GML graph netctl can read: {exc}.") from None
    return graph_to_system(g, path, model=model, what="GML")


def write_gml(system: StructuredSystem, path: str | os.PathLike[str]) -> None:
    """Write the network and node table as GML (atomically)."""
    import networkx as nx

    warn_not_kept(system, path, "GML")
    refuse_lone_surrogates(system, "GML")
    g = system_to_graph(system)
    for _, d in g.nodes(data=True):
        for k, v in list(d.items()):
            if isinstance(v, bool):
                d[k] = int(v)
    buf = io.BytesIO()
    nx.write_gml(g, buf)
    with atomic_write(path, "wb") as fh:
        fh.write(buf.getvalue())
