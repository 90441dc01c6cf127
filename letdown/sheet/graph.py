"""The flowsheet as a networkx graph: build it, check it, order it, tear its loops.

Free functions over a plain graph (networkx habit): :func:`build_graph` turns a
:class:`~letdown.sheet.spec.SheetSpec` into a ``networkx.MultiDiGraph`` (a subclass of
``DiGraph``; several streams may join the same two blocks, e.g. a separator's vapour and liquid
both going to one mixer, so edges are keyed by stream name):

* nodes -- every block (node id = block name, ``role="block"``), every feed (``"feed:NAME"``,
  ``role="feed"``) and every product stream's end (``"product:NAME"``, ``role="product"``); block,
  stream and feed names cannot hold ``:`` (the schema's name pattern), so ids never collide;
* edges -- streams, ``(producer, consumer, key=stream)`` with data ``stream``, ``from_port``,
  ``to_port``.

:func:`solve_order` orders the strongly connected components topologically and, inside each
component with a cycle, chooses the fewest tear streams that break every cycle (an exact minimum
feedback-edge set, found by branch and bound over the component's simple cycles; flowsheet loops
are small).
"""
from __future__ import annotations

import difflib
from dataclasses import dataclass

import networkx as nx

from ..errors import TopologyError
from .spec import SheetSpec, Where

#: Above this many simple cycles in one component the exact tear search is not attempted and a
#: greedy choice is used (``Step.exact`` is False). Flowsheet loops have a handful of cycles; the
#: cap only guards against pathological files.
MAX_CYCLES = 2000

#: Cap on branch-and-bound nodes for the exact tear search (same reason).
MAX_SEARCH_NODES = 200_000


@dataclass(frozen=True)
class Step:
    """One step of the calculation order.

    Attributes
    ----------
    blocks : tuple of str
        Block names, in the order to calculate them (after cutting the tears).
    tears : tuple of str
        Tear streams (empty for a block outside any loop).
    is_loop : bool
        True if the blocks form a loop that must be iterated.
    is_closed : bool
        True for a loop no feed reaches (a refrigerant circuit): its tears start from ``guesses``.
    exact : bool
        True if the tear set is a proven minimum.
    """

    blocks: tuple
    tears: tuple = ()
    is_loop: bool = False
    is_closed: bool = False
    exact: bool = True


def downstream_streams(fs: SheetSpec, block: str) -> list:
    """The streams downstream of ``block``: its outlets and every stream reachable from them
    through the blocks (loops included once), nearest first."""
    seen: list = []
    todo = list(fs.blocks[block].outlets.values())
    while todo:
        s = todo.pop(0)
        if s in seen:
            continue
        seen.append(s)
        for b in fs.blocks.values():
            if s in b.inlets.values():
                todo.extend(o for o in b.outlets.values() if o not in seen)
    return seen


def feed_node(name: str) -> str:
    """Node id of feed ``name``."""
    return f"feed:{name}"


def product_node(name: str) -> str:
    """Node id of product stream ``name``."""
    return f"product:{name}"


def _at(where: Where | None) -> str:
    return f" (line {where.line})" if where is not None and where.line is not None else ""


def _raise(message, where: Where | None, field: str | None, source):
    raise TopologyError(message, file=(where.file if where and where.file else source),
                        line=where.line if where else None, field=field)


def build_graph(fs: SheetSpec) -> nx.MultiDiGraph:
    """Build and check the flowsheet graph.

    Parameters
    ----------
    fs : SheetSpec

    Returns
    -------
    networkx.MultiDiGraph
        Nodes and edges as described in the module docstring; ``G.graph`` holds ``source`` (file),
        ``order`` (block name -> position in the file, for stable ordering) and ``guesses`` (the
        set of streams with a starting value).

    Raises
    ------
    TopologyError
        A stream produced twice (or by a block and a feed of the same name), taken by two blocks,
        never produced, both an inlet and an outlet of the same block; a feed no block takes; a
        guess for a stream that does not exist.
    """
    src = fs.source
    G = nx.MultiDiGraph(source=src, order={n: i for i, n in enumerate(fs.blocks)},
                        guesses=frozenset(fs.guesses))
    producer: dict = {}   # stream -> (node, port, where)
    consumer: dict = {}
    for name, feed in fs.feeds.items():
        G.add_node(feed_node(name), role="feed", spec=feed)
        producer[name] = (feed_node(name), None, feed.where)
    for bname, b in fs.blocks.items():
        G.add_node(bname, role="block", kind=b.kind, spec=b)
    for bname, b in fs.blocks.items():
        ins = set(b.inlets.values())
        for port, stream in b.outlets.items():
            where = b.field_where.get(f"out:{port}", b.where)
            field = f"equipment.{bname}"
            if stream in ins:
                _raise(f"stream '{stream}' is both an inlet and an outlet of block '{bname}'",
                       where, field, src)
            if stream in producer:
                node, _, w0 = producer[stream]
                if G.nodes[node]["role"] == "feed":
                    msg = f"stream '{stream}' has the name of a feed{_at(w0)}; rename one of them"
                elif node == bname:
                    msg = f"block '{bname}' sends two outlets into the same stream '{stream}'"
                else:
                    msg = (f"stream '{stream}' is produced twice: by '{node}'{_at(w0)} and by "
                           f"'{bname}'")
                _raise(msg, where, field, src)
            producer[stream] = (bname, port, where)
    for bname, b in fs.blocks.items():
        for port, stream in b.inlets.items():
            where = b.field_where.get(f"in:{port}", b.where)
            field = f"equipment.{bname}"
            if stream in consumer:
                node, _, w0 = consumer[stream]
                if node == bname:
                    msg = f"block '{bname}' takes stream '{stream}' twice"
                else:
                    msg = (f"stream '{stream}' is taken by two blocks: '{node}'{_at(w0)} and "
                           f"'{bname}'; use a splitter to divide it")
                _raise(msg, where, field, src)
            if stream not in producer:
                near = difflib.get_close_matches(stream, list(producer), n=2, cutoff=0.6)
                hint = f"; did you mean {' or '.join(repr(n) for n in near)}?" if near else ""
                _raise(f"stream '{stream}' has no producer: it is neither a feed nor the outlet "
                       f"of any block{hint}", where, field, src)
            consumer[stream] = (bname, port, where)
    for stream, (node, port, where) in producer.items():
        if stream in consumer:
            cnode, cport, _ = consumer[stream]
        else:
            if G.nodes[node]["role"] == "feed":
                _raise(f"feed '{stream}' is not taken by any block", where, f"feeds.{stream}", src)
            cnode, cport = product_node(stream), None
            G.add_node(cnode, role="product")
        G.add_edge(node, cnode, key=stream, stream=stream, from_port=port, to_port=cport)
    for stream, guess in fs.guesses.items():
        if stream not in producer:
            _raise(f"guess for '{stream}', which is not a stream of this flowsheet",
                   guess.where, f"guesses.{stream}", src)
        if G.nodes[producer[stream][0]]["role"] == "feed":
            _raise(f"'{stream}' is a feed; it needs no guess", guess.where,
                   f"guesses.{stream}", src)
    return G


def streams(G: nx.MultiDiGraph) -> dict:
    """Every stream -> (producer node, consumer node, edge data), in edge order."""
    return {k: (u, v, d) for u, v, k, d in G.edges(keys=True, data=True)}


def _block_key(G):
    order = G.graph.get("order", {})
    return lambda n: (order.get(n, len(order)), str(n))


def solve_order(G: nx.MultiDiGraph) -> list:
    """The order to calculate the blocks, with the tear streams of each loop.

    Parameters
    ----------
    G : networkx.MultiDiGraph
        From :func:`build_graph`.

    Returns
    -------
    list of Step
        Strongly connected components of the blocks in topological order (ties broken by the
        order of the file). A block outside any loop is a step of its own; a loop is one step
        whose ``blocks`` are in calculation order once its ``tears`` are cut.

    Raises
    ------
    TopologyError
        A closed loop (no feed reaches it) whose cycles cannot all be cut at streams that have a
        starting value under ``guesses``.

    Examples
    --------
    >>> from letdown.sheet.spec import BlockSpec, FeedSpec, SheetSpec, GasSpec
    >>> fs = SheetSpec("demo", GasSpec("peng-robinson", {"methane": 1.0}),
    ...     {"a": FeedSpec("a", 300.0, 50e5, 1.0)},
    ...     {"mix": BlockSpec("mix", "mixer", {"in0": "a", "in1": "back"}, {"out": "b"}, {}),
    ...      "split": BlockSpec("split", "splitter", {"in": "b"}, {"c": "c", "back": "back"},
    ...                         {"fractions": {"c": 0.5, "back": "rest"}})})
    >>> [(s.blocks, s.tears) for s in solve_order(build_graph(fs))]
    [(('mix', 'split'), ('back',))]
    """
    key = _block_key(G)
    blocks = [n for n, d in G.nodes(data=True) if d.get("role") == "block"]
    H = nx.DiGraph(G.subgraph(blocks))
    comps = list(nx.strongly_connected_components(H))
    index = {n: i for i, c in enumerate(comps) for n in c}
    C = nx.DiGraph()
    for i, c in enumerate(comps):
        C.add_node(i, first=min(key(n) for n in c))
    for u, v in H.edges():
        if index[u] != index[v]:
            C.add_edge(index[u], index[v])
    steps = []
    guessed = G.graph.get("guesses", frozenset())
    for ci in nx.lexicographical_topological_sort(C, key=lambda i: C.nodes[i]["first"]):
        members = comps[ci]
        if len(members) == 1:
            (n,) = members
            if not G.has_edge(n, n):
                steps.append(Step(blocks=(n,)))
                continue
        steps.append(_loop_step(G, members, guessed, key))
    return steps


def _loop_step(G, members, guessed, key) -> Step:
    sub = G.subgraph(members)
    closed = not any(G.nodes[p].get("role") == "feed" or p not in members
                     for n in members for p in G.predecessors(n))
    # links (u, v) with the streams on them; cutting a link means tearing all its streams
    links: dict = {}
    for u, v, k in sub.edges(keys=True):
        links.setdefault((u, v), []).append(k)
    for streams_ in links.values():
        streams_.sort()
    # among equally small tear sets prefer links that run backwards in the file's order (the
    # recycle streams as the user wrote them), then the earliest
    file_rank = {lk: (key(lk[0]) < key(lk[1]), key(lk[0]), key(lk[1])) for lk in links}
    allowed = {lk for lk, ss in links.items() if not closed or all(s in guessed for s in ss)}

    cycles = []
    for cyc in nx.simple_cycles(nx.DiGraph(sub)):
        cycles.append(frozenset(zip(cyc, cyc[1:] + cyc[:1])))
        if len(cycles) > MAX_CYCLES:
            break
    names = sorted(members, key=key)
    if closed:
        bad = [c for c in cycles if not c & allowed]
        if bad:
            where = G.nodes[names[0]]["spec"].where
            ring = " -> ".join(sorted({u for u, _ in bad[0]}, key=key))
            _raise(f"closed loop ({ring}) has no feed; give a starting value under 'guesses:' "
                   f"for one of its streams ({', '.join(s for lk in sorted(bad[0], key=file_rank.get) for s in links[lk])})",
                   where, "guesses", G.graph.get("source"))

    def score(chosen):
        n_streams = sum(len(links[lk]) for lk in chosen)
        n_unguessed = sum(1 for lk in chosen for s in links[lk] if s not in guessed)
        return n_streams, n_unguessed

    exact = len(cycles) <= MAX_CYCLES
    best = None
    if exact:
        best, exact = _exact_cut(cycles, allowed, score, file_rank)
    if best is None:
        best = _greedy_cut(cycles, allowed, score, file_rank)
    cut = set(best)
    tears = tuple(s for lk in sorted(cut, key=file_rank.get) for s in links[lk])
    rest = nx.DiGraph(sub)
    rest.remove_edges_from(cut)
    order = tuple(nx.lexicographical_topological_sort(rest, key=key))
    return Step(blocks=order, tears=tears, is_loop=True, is_closed=closed, exact=exact)


def _exact_cut(cycles, allowed, score, rank):
    """Minimum-score set of links hitting every cycle (branch and bound)."""
    best = [None, None]
    nodes = [0]

    def better(chosen):
        s = score(chosen) + (sorted(rank[lk] for lk in chosen),)
        return best[0] is None or s < best[1], s

    def search(chosen):
        nodes[0] += 1
        if nodes[0] > MAX_SEARCH_NODES:
            return
        if best[0] is not None and score(chosen) > best[1][:2]:
            return
        open_ = next((c for c in cycles if not c & chosen), None)
        if open_ is None:
            ok, s = better(chosen)
            if ok:
                best[0], best[1] = frozenset(chosen), s
            return
        for lk in sorted(open_ & allowed, key=rank.get):
            search(chosen | {lk})

    search(frozenset())
    return best[0], nodes[0] <= MAX_SEARCH_NODES


def _greedy_cut(cycles, allowed, score, rank):
    """Cut the allowed link lying on most open cycles until none is left (not a proven minimum)."""
    chosen: set = set()
    open_ = list(cycles)
    while open_:
        counts: dict = {}
        for c in open_:
            for lk in c & allowed:
                counts[lk] = counts.get(lk, 0) + 1
        lk = min(counts, key=lambda x: (-counts[x], score({x}), rank[x]))
        chosen.add(lk)
        open_ = [c for c in open_ if lk not in c]
    return frozenset(chosen)
