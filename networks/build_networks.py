"""Rebuild the invented example networks in this folder (deterministic, seeded).

    python3 networks/build_networks.py

Writes ``regional_grid.toml`` and ``water_network.graphml``. The chemical plant
(``chemical_plant.toml``) is written by hand. Every network here is invented: places,
sizes, costs and wiring are made up for demonstrations and tests, and describe no real
system.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent


def _knn_edges(xy: np.ndarray, k: int) -> set[tuple[int, int]]:
    d = np.linalg.norm(xy[:, None, :] - xy[None, :, :], axis=2)
    np.fill_diagonal(d, np.inf)
    edges = set()
    for i in range(len(xy)):
        for j in np.argsort(d[i])[:k]:
            edges.add((min(i, int(j)), max(i, int(j))))
    return edges


def _connect(xy: np.ndarray, edges: set[tuple[int, int]]) -> set[tuple[int, int]]:
    """Join components by their closest pair of nodes until one component remains."""
    import networkx as nx

    g = nx.Graph(list(edges))
    g.add_nodes_from(range(len(xy)))
    comps = [sorted(c) for c in nx.connected_components(g)]
    while len(comps) > 1:
        a = np.array(comps[0])
        rest = np.array([v for c in comps[1:] for v in c])
        d = np.linalg.norm(xy[a][:, None] - xy[rest][None], axis=2)
        i, j = np.unravel_index(np.argmin(d), d.shape)
        edges.add((min(int(a[i]), int(rest[j])), max(int(a[i]), int(rest[j]))))
        g.add_edge(int(a[i]), int(rest[j]))
        comps = [sorted(c) for c in nx.connected_components(g)]
    return edges


def regional_grid(seed: int = 20261202) -> str:
    """About 180 buses in five areas; lines between nearby buses and a few tie lines."""
    rng = np.random.default_rng(seed)
    areas = {"north": (40, 160), "lakes": (140, 150), "valley": (90, 90), "coast": (20, 30),
             "plains": (160, 40)}
    names, xy, area_of = [], [], []
    for area, (cx, cy) in areas.items():
        k = int(rng.integers(30, 42))
        pts = rng.normal([cx, cy], 18, size=(k, 2))
        for i, p in enumerate(pts):
            names.append(f"{area}_{i + 1:02d}")
            xy.append(p)
            area_of.append(area)
    xy = np.round(np.array(xy), 1)
    n = len(names)
    edges: set[tuple[int, int]] = set()
    area_arr = np.array(area_of)
    for area in areas:
        idx = np.flatnonzero(area_arr == area)
        local = _knn_edges(xy[idx], 2)
        edges |= {(int(idx[a]), int(idx[b])) for a, b in local}
    edges = _connect(xy, edges)
    # a few extra tie lines between areas (closest bus pairs)
    names_list = list(areas)
    for a, b in [(0, 1), (1, 2), (2, 3), (2, 4), (3, 4), (0, 2)]:
        ia = np.flatnonzero(area_arr == names_list[a])
        ib = np.flatnonzero(area_arr == names_list[b])
        d = np.linalg.norm(xy[ia][:, None] - xy[ib][None], axis=2)
        i, j = np.unravel_index(np.argmin(d), d.shape)
        edges.add((min(int(ia[i]), int(ib[j])), max(int(ia[i]), int(ib[j]))))
    # generator buses and candidate sites for fast-acting actuators (storage, converters)
    gen = rng.random(n) < 0.15
    candidate = gen | (rng.random(n) < 0.15)
    cost = np.where(gen, 1.0, np.round(rng.uniform(2.0, 6.0, n), 2))
    lines = [
        "# An invented regional transmission grid (no real system): "
        f"{n} buses in five areas.",
        "# Couplings are lines (undirected: each acts both ways). Use --model second-order",
        "# for swing-type dynamics (bus:pos = angle, bus:vel = frequency).",
        "# actuator = true marks candidate sites (generator buses and sites where storage or",
        "# a converter could be added); actuator_cost is in arbitrary units.",
        "",
        "[system]",
        'name = "invented regional transmission grid"',
        'description = "Five areas (north, lakes, valley, coast, plains) with tie lines; '
        'coordinates in km on an invented map."',
        "",
        "[states]",
    ]
    for i in range(n):
        parts = [f"x = {float(xy[i, 0])!r}", f"y = {float(xy[i, 1])!r}", f"actuator = {str(bool(candidate[i])).lower()}"]
        if candidate[i]:
            parts.append(f"actuator_cost = {float(cost[i])!r}")
        parts.append(f'area = "{area_of[i]}"')
        parts.append(f'kind = "{"generator" if gen[i] else "load"}"')
        lines.append(f"{names[i]} = {{ {', '.join(parts)} }}")
    lines += ["", "[couplings]", "undirected = true", "links = ["]
    for a, b in sorted(edges):
        lines.append(f'  ["{names[a]}", "{names[b]}"],')
    lines += ["]", ""]
    lines += ["[subsystems]"]
    for area in areas:
        members = [names[i] for i in range(n) if area_of[i] == area]
        lines.append(f"{area} = [{', '.join(chr(34) + m + chr(34) for m in members)}]")
    return "\n".join(lines) + "\n"


def water_network(seed: int = 7) -> str:
    """About 500 junctions on a street-like grid with loops, two reservoirs, pumps,
    tanks and valves (GraphML, undirected pipes, coordinates in metres)."""
    import io

    import networkx as nx

    rng = np.random.default_rng(seed)
    rows, cols = 20, 24
    g = nx.Graph()
    pos = {}
    for r in range(rows):
        for c in range(cols):
            name = f"J{r:02d}{c:02d}"
            pos[name] = (c * 120.0 + rng.normal(0, 15), r * 110.0 + rng.normal(0, 15))
    for r in range(rows):
        for c in range(cols):
            a = f"J{r:02d}{c:02d}"
            if c + 1 < cols and rng.random() < 0.8:
                g.add_edge(a, f"J{r:02d}{c + 1:02d}")
            if r + 1 < rows and rng.random() < 0.6:
                g.add_edge(a, f"J{r + 1:02d}{c:02d}")
    g.add_nodes_from(pos)
    # keep the largest connected part (a real network is connected)
    keep = max(nx.connected_components(g), key=len)
    g = g.subgraph(keep).copy()
    extra = {
        "R_east": ("reservoir", (cols * 120.0 + 300, 500.0), "J0823"),
        "R_west": ("reservoir", (-400.0, 1500.0), "J1300"),
        "P_east": ("pump", (cols * 120.0 + 150, 500.0), None),
        "P_west": ("pump", (-200.0, 1500.0), None),
        "T_hill": ("tank", (1200.0, rows * 110.0 + 200), "J1912"),
        "T_south": ("tank", (1500.0, -250.0), "J0012"),
    }
    for name, (kind, p, _) in extra.items():
        pos[name] = p
        g.add_node(name)
    g.add_edge("R_east", "P_east")
    g.add_edge("P_east", "J0823" if "J0823" in g else next(iter(keep)))
    g.add_edge("R_west", "P_west")
    g.add_edge("P_west", "J1300" if "J1300" in g else next(iter(keep)))
    for t, j in (("T_hill", "J1912"), ("T_south", "J0012")):
        g.add_edge(t, j if j in g else next(iter(keep)))
    junctions = [v for v in g if v.startswith("J")]
    valves = set(rng.choice(sorted(junctions), size=25, replace=False).tolist())
    for v in g:
        x, y = pos[v]
        kind = extra[v][0] if v in extra else ("valve" if v in valves else "junction")
        act = kind in ("pump", "valve")
        attrs = {"x": round(float(x), 1), "y": round(float(y), 1), "kind": kind,
                 "actuator": act, "sensor": True,
                 "sensor_cost": 1.0 if kind == "junction" else 0.5}
        if act:
            attrs["actuator_cost"] = 4.0 if kind == "pump" else float(round(rng.uniform(1, 3), 1))
        g.nodes[v].update(attrs)
    g.graph.clear()
    buf = io.BytesIO()
    h = nx.Graph()
    h.add_nodes_from(sorted(g.nodes(data=True)))
    h.add_edges_from(sorted(tuple(sorted(e)) for e in g.edges()))
    nx.write_graphml(h, buf)
    text = buf.getvalue().decode()
    note = ("<!-- An invented water distribution network (no real system): junctions on a "
            "street-like grid, two reservoirs with pumps, two tanks, valves. Pipes are "
            "undirected; actuator marks pumps and valves; coordinates in metres. -->\n")
    head, rest = text.split("\n", 1)
    return head + "\n" + note + rest


if __name__ == "__main__":
    (HERE / "regional_grid.toml").write_text(regional_grid())
    (HERE / "water_network.graphml").write_text(water_network())
    print("wrote regional_grid.toml and water_network.graphml")
