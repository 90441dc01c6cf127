"""The flowsheet drawn from a result as inline SVG: blocks as simple symbols, streams as arrows.

Layout (our own, plain networkx, no layout engine to install):

1. The graph is rebuilt from the result's equipment ports (``inlets`` / ``outlets``): a node per
   block, a source node per feed and a sink node per product, an edge per stream.
2. Tear streams (the loops' ``tears``) and any other edge that closes a cycle are set aside as
   recycles, so that what remains is acyclic.
3. Each node's column is its longest path from a source (streams run left to right); products sit
   one column right of their producer.
4. Within a column, nodes are ordered by the barycentre of their neighbours in the column before
   (then after), sweeping a few times: the usual heuristic against crossings (Sugiyama et al. 1981).
5. Recycles are drawn back under the drawing, each in a lane of its own.

Stream labels (name, T, P) sit on the arrows; a label that would overlap one already placed is
moved down until it does not. Streams in hazard (hydrate, ice, below the material's limit) are drawn
thick and dashed and named in the legend.

Pure functions of their arguments; no thermodynamics.
"""
from __future__ import annotations

from html import escape

import networkx as nx

#: Column pitch, row pitch and node size of the drawing [px] (chosen so that a three-line stream
#: label fits between two columns and between two rows).
COLUMN = 240
ROW = 120
NODE_W, NODE_H = 64, 44
MARGIN = 36
#: Vertical spacing of the ports where several streams meet one side of a node [px].
PORT_STEP = 12
#: Height of one recycle lane under the drawing [px].
LANE = 26
#: Approximate width of one character of the 11 px label font [px] and height of a label line.
CHAR_W = 6.4
LINE_H = 13
#: Barycentre sweeps (down and up count as two); more than a few rarely helps on small sheets.
SWEEPS = 6


def _graph(equipment: dict, streams) -> nx.MultiDiGraph:
    G = nx.MultiDiGraph()
    producer, consumer = {}, {}
    for name, eq in equipment.items():
        G.add_node(name, kind=str(eq.get("kind", "block")))
        for s in (eq.get("outlets") or {}).values():
            producer[s] = name
        for s in (eq.get("inlets") or {}).values():
            consumer.setdefault(s, name)
    for s in streams:
        src = producer.get(s)
        dst = consumer.get(s)
        if src is None:
            src = f"feed:{s}"
            G.add_node(src, kind="feed")
        if dst is None:
            dst = f"product:{s}"
            G.add_node(dst, kind="product")
        G.add_edge(src, dst, key=s)
    return G


def _acyclic(G: nx.MultiDiGraph, tears) -> tuple[nx.MultiDiGraph, set]:
    """The graph without its recycle edges, and the names of those streams."""
    recycles = set(tears)
    H = nx.MultiDiGraph()
    H.add_nodes_from(G.nodes(data=True))
    H.add_edges_from((u, v, k) for u, v, k in G.edges(keys=True) if k not in recycles)
    while True:
        try:
            cycle = nx.find_cycle(H)
        except nx.NetworkXNoCycle:
            return H, recycles
        u, v, k = cycle[-1][:3]
        H.remove_edge(u, v, key=k)
        recycles.add(k)


def layout(equipment: dict, streams, tears=()) -> dict:
    """Positions of the drawing.

    Returns
    -------
    dict
        ``nodes``: {node: (x, y, kind)} centres [px]; ``edges``: [(stream, u, v, is_recycle)];
        ``columns``: number of columns; ``rows``: largest column height.
    """
    G = _graph(equipment, streams)
    H, recycles = _acyclic(G, tears)
    column = {}
    for v in nx.topological_sort(H):
        preds = [column[u] + 1 for u in H.predecessors(v)]
        column[v] = max(preds, default=0)
    # feeds as late as their first consumer allows (a feed into the last block sits beside it)
    for v, kind in G.nodes(data="kind"):
        if kind == "feed":
            succ = [column[w] for w in H.successors(v)]
            if succ:
                column[v] = min(succ) - 1
    shift = -min(column.values(), default=0)
    column = {v: c + shift for v, c in column.items()}
    n_cols = max(column.values(), default=0) + 1
    cols = [[] for _ in range(n_cols)]
    for v in nx.topological_sort(H):
        cols[column[v]].append(v)
    pos = {v: float(i) for c in cols for i, v in enumerate(c)}
    for sweep in range(SWEEPS):
        order = range(1, n_cols) if sweep % 2 == 0 else range(n_cols - 2, -1, -1)
        for c in order:
            def centre(v):
                near = (list(H.predecessors(v)) if sweep % 2 == 0 else list(H.successors(v)))
                near = [pos[w] for w in near if column[w] != c]
                return sum(near) / len(near) if near else pos[v]
            cols[c].sort(key=lambda v: (centre(v), pos[v]))
            for i, v in enumerate(cols[c]):
                pos[v] = float(i)
    n_rows = max((len(c) for c in cols), default=1)
    nodes = {}
    for c, members in enumerate(cols):
        offset = (n_rows - len(members)) / 2.0
        for i, v in enumerate(members):
            nodes[v] = (MARGIN + NODE_W / 2 + c * COLUMN, MARGIN + NODE_H / 2 + (i + offset) * ROW,
                        G.nodes[v].get("kind", "block"))
    edges = [(k, u, v, k in recycles) for u, v, k in G.edges(keys=True)]
    return {"nodes": nodes, "edges": edges, "columns": n_cols, "rows": n_rows}


# -- symbols ------------------------------------------------------------------------------------
def _symbol(kind: str, x: float, y: float) -> str:
    """Our own simple symbol of a block kind, centred at (x, y)."""
    w, h = NODE_W / 2, NODE_H / 2
    box = f'<rect x="{x - w:.1f}" y="{y - h:.1f}" width="{NODE_W}" height="{NODE_H}" rx="4"/>'
    if kind == "throttle":       # two triangles tip to tip
        return (f'<path d="M{x - w:.1f},{y - h:.1f} L{x:.1f},{y:.1f} L{x - w:.1f},{y + h:.1f} Z '
                f'M{x + w:.1f},{y - h:.1f} L{x:.1f},{y:.1f} L{x + w:.1f},{y + h:.1f} Z"/>')
    if kind in ("heater", "cooler"):
        zig = " ".join(f"L{x - w + 8 + i * (NODE_W - 16) / 6:.1f},{y + (8 if i % 2 else -8):.1f}"
                       for i in range(7))
        mark = "+" if kind == "heater" else "&#8722;"
        return (box + f'<path class="thin" d="M{x - w + 8:.1f},{y:.1f} {zig}"/>'
                f'<text class="mark" x="{x + w - 9:.1f}" y="{y - h + 12:.1f}">{mark}</text>')
    if kind == "separator":      # a vertical drum
        return (f'<rect x="{x - 16:.1f}" y="{y - h - 8:.1f}" width="32" height="{NODE_H + 16}" '
                f'rx="16"/><line class="thin" x1="{x - 16:.1f}" y1="{y + 6:.1f}" '
                f'x2="{x + 16:.1f}" y2="{y + 6:.1f}"/>')
    if kind == "compressor":     # narrowing trapezoid
        return (f'<path d="M{x - w:.1f},{y - h:.1f} L{x + w:.1f},{y - h / 2:.1f} '
                f'L{x + w:.1f},{y + h / 2:.1f} L{x - w:.1f},{y + h:.1f} Z"/>')
    if kind == "expander":       # widening trapezoid
        return (f'<path d="M{x - w:.1f},{y - h / 2:.1f} L{x + w:.1f},{y - h:.1f} '
                f'L{x + w:.1f},{y + h:.1f} L{x - w:.1f},{y + h / 2:.1f} Z"/>')
    if kind in ("mixer", "splitter"):
        r = h
        inner = "" if kind == "mixer" else (f'<line class="thin" x1="{x:.1f}" y1="{y - r:.1f}" '
                                            f'x2="{x:.1f}" y2="{y + r:.1f}"/>')
        return f'<circle cx="{x:.1f}" cy="{y:.1f}" r="{r:.1f}"/>' + inner
    if kind == "exchanger":      # a shell with a tube pass across it
        return (f'<circle cx="{x:.1f}" cy="{y:.1f}" r="{h:.1f}"/>'
                f'<path class="thin" d="M{x - h:.1f},{y:.1f} L{x - 6:.1f},{y:.1f} L{x:.1f},'
                f'{y - 10:.1f} L{x + 6:.1f},{y + 10:.1f} L{x + 6:.1f},{y:.1f} L{x + h:.1f},{y:.1f}"/>')
    if kind == "inject":         # a diamond: a dosing point
        return (f'<path d="M{x:.1f},{y - h:.1f} L{x + h:.1f},{y:.1f} L{x:.1f},{y + h:.1f} '
                f'L{x - h:.1f},{y:.1f} Z"/>')
    if kind == "feed":
        return (f'<path class="terminal" d="M{x - 14:.1f},{y - 9:.1f} L{x + 6:.1f},{y - 9:.1f} '
                f'L{x + 14:.1f},{y:.1f} L{x + 6:.1f},{y + 9:.1f} L{x - 14:.1f},{y + 9:.1f} Z"/>')
    if kind == "product":
        return (f'<path class="terminal" d="M{x - 14:.1f},{y - 9:.1f} L{x + 6:.1f},{y - 9:.1f} '
                f'L{x + 14:.1f},{y:.1f} L{x + 6:.1f},{y + 9:.1f} L{x - 14:.1f},{y + 9:.1f} Z '
                f'M{x - 6:.1f},{y - 9:.1f} L{x + 2:.1f},{y:.1f} L{x - 6:.1f},{y + 9:.1f}"/>')
    return box


def _half_width(kind: str) -> float:
    return 14.0 if kind in ("feed", "product") else NODE_W / 2


def _overlaps(a, b) -> bool:
    return not (a[2] <= b[0] or b[2] <= a[0] or a[3] <= b[1] or b[3] <= a[1])


def flowsheet_svg(equipment: dict, streams: dict, tears=(), hazards=None, title: str = "") -> str:
    """The flowsheet as one inline ``<svg>`` element.

    Parameters
    ----------
    equipment : dict
        Block name -> {"kind", "inlets": {port: stream}, "outlets": {port: stream}} (the JSON
        contract's equipment).
    streams : dict
        Stream name -> list of label lines (e.g. ``["network", "5.00 degC", "17.00 barg"]``), in
        the order to draw.
    tears : iterable of str
        The loops' tear streams (drawn as recycles).
    hazards : dict, optional
        Stream name -> short reason (``"hydrate"``): drawn as hazard and listed in the legend.
    title : str
        The drawing's accessible title.

    Returns
    -------
    str
    """
    hazards = hazards or {}
    lay = layout(equipment, list(streams), tears)
    nodes = lay["nodes"]
    height = MARGIN * 2 + NODE_H + (lay["rows"] - 1) * ROW
    recycles = [e for e in lay["edges"] if e[3]]
    body_h = height + (len(recycles) + 1) * LANE
    width = MARGIN * 2 + NODE_W + (lay["columns"] - 1) * COLUMN
    parts, labels, placed = [], [], []
    # several streams at one side of a node leave or enter at ports spread over its height,
    # ordered by where the other end sits (fewer crossings at the node)
    port: dict = {}
    for end, other in ((1, 2), (2, 1)):
        side: dict = {}
        for e in lay["edges"]:
            side.setdefault(e[end], []).append(e)
        for node, es in side.items():
            es.sort(key=lambda e: (e[3], nodes[e[other]][1], nodes[e[other]][0]))
            k = len(es)
            for i, e in enumerate(es):
                port[(e[0], end)] = (i - (k - 1) / 2.0) * min(PORT_STEP, NODE_H / max(k, 1))
    for s, u, v, is_recycle in lay["edges"]:
        (x1, y1, k1), (x2, y2, k2) = nodes[u], nodes[v]
        y1, y2 = y1 + port[(s, 1)], y2 + port[(s, 2)]
        sx, tx = x1 + _half_width(k1), x2 - _half_width(k2)
        cls = "stream hazard" if s in hazards else "stream"
        if is_recycle:
            ly = height + LANE / 2 + recycles.index((s, u, v, True)) * LANE
            d = (f"M{sx:.1f},{y1:.1f} L{sx + 14:.1f},{y1:.1f} L{sx + 14:.1f},{ly:.1f} "
                 f"L{tx - 14:.1f},{ly:.1f} L{tx - 14:.1f},{y2:.1f} L{tx:.1f},{y2:.1f}")
            cls += " recycle"
            lx, lyy = (sx + tx) / 2, ly
        else:
            mx = (sx + tx) / 2
            d = f"M{sx:.1f},{y1:.1f} C{mx:.1f},{y1:.1f} {mx:.1f},{y2:.1f} {tx:.1f},{y2:.1f}"
            lx, lyy = mx, (y1 + y2) / 2
        parts.append(f'<path class="{cls}" d="{d}" marker-end="url(#arrow)" data-stream="{escape(s)}">'
                     f"<title>{escape(s)}</title></path>")
        lines = list(streams.get(s) or [s])
        if s in hazards:
            lines[0] = f"{lines[0]} \u26a0"
        w = max(len(t) for t in lines) * CHAR_W + 8
        h = len(lines) * LINE_H + 4
        box = [lx - w / 2, lyy - h / 2, lx + w / 2, lyy + h / 2]
        for _ in range(40):                      # move down until it overlaps no earlier label
            hit = next((b for b in placed if _overlaps(box, b)), None)
            if hit is None:
                break
            dy = hit[3] - box[1] + 2
            box = [box[0], box[1] + dy, box[2], box[3] + dy]
        placed.append(box)
        body_h = max(body_h, box[3] + MARGIN / 2)
        text = "".join(f'<tspan x="{lx:.1f}" dy="{LINE_H if i else 0}">{escape(t)}</tspan>'
                       for i, t in enumerate(lines))
        labels.append(f'<g class="label{" hazard" if s in hazards else ""}" data-label="{escape(s)}">'
                      f'<rect x="{box[0]:.1f}" y="{box[1]:.1f}" width="{w:.1f}" height="{h:.1f}" '
                      f'rx="3"/><text x="{lx:.1f}" y="{box[1] + LINE_H - 1:.1f}">{text}</text></g>')
    blocks = []
    for v, (x, y, kind) in nodes.items():
        if kind in ("feed", "product"):
            name = v.split(":", 1)[1]
            blocks.append(f'<g class="node terminal" data-node="{escape(v)}">{_symbol(kind, x, y)}'
                          f"<title>{kind} {escape(name)}</title></g>")
            continue
        top = y - NODE_H / 2 - (8 if kind == "separator" else 0)   # the drum stands taller
        blocks.append(f'<g class="node" data-block="{escape(v)}">{_symbol(kind, x, y)}'
                      f'<text class="name" x="{x:.1f}" y="{top - 14:.1f}">{escape(v)}</text>'
                      f'<text class="kind" x="{x:.1f}" y="{top - 3:.1f}">{escape(kind)}'
                      f"</text></g>")
    legend = ['<text x="0" y="0">Legend:</text>',
              '<path class="stream" d="M60,-4 L96,-4" marker-end="url(#arrow)"/>'
              '<text x="102" y="0">stream</text>',
              '<path class="stream recycle" d="M160,-4 L196,-4" marker-end="url(#arrow)"/>'
              '<text x="202" y="0">recycle (tear)</text>',
              '<path class="stream hazard" d="M300,-4 L336,-4" marker-end="url(#arrow)"/>'
              '<text x="342" y="0">stream in hazard \u26a0</text>']
    for i, (s, why) in enumerate(sorted(hazards.items())):
        legend.append(f'<text class="hazard-text" x="0" y="{(i + 1) * LINE_H + 2}">'
                      f"\u26a0 {escape(s)}: {escape(why)}</text>")
    legend_h = (len(hazards) + 1) * LINE_H + 8
    total_h = body_h + legend_h + MARGIN / 2
    width = max(width, 480)
    return (f'<svg class="flowsheet" viewBox="0 0 {width:.0f} {total_h:.0f}" width="{width:.0f}" '
            f'height="{total_h:.0f}" role="img" aria-label="{escape(title or "flowsheet")}">'
            '<defs><marker id="arrow" viewBox="0 0 10 10" refX="9" refY="5" markerWidth="9" '
            'markerHeight="9" markerUnits="userSpaceOnUse" orient="auto-start-reverse"><path d="M0,0 L10,5 L0,10 Z"/></marker></defs>'
            + "".join(parts) + "".join(blocks) + "".join(labels)
            + f'<g class="legend" transform="translate({MARGIN},{body_h + LINE_H:.0f})">'
            + "".join(legend) + "</g></svg>")
