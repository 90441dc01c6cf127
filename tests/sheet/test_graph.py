"""Flowsheet graph: checks with file:line, order by strongly connected components, minimum tears."""
import itertools
import textwrap

import networkx as nx
import pytest
from hypothesis import given, settings, strategies as st

from letdown.errors import TopologyError
from letdown.sheet.graph import build_graph, feed_node, product_node, solve_order
from letdown.sheet.loader import parse_spec
from letdown.sheet.spec import BlockSpec, FeedSpec, SheetSpec, GasSpec

HEAD = """\
gas: {composition: {methane: 0.9, propane: 0.1}}
feeds:
  a: {T: 20 degC, P: 60 barg, flow: 100 kmol/h}
equipment:
"""


def sheet(blocks_yaml, head=HEAD, guesses=""):
    return parse_spec(head + textwrap.indent(textwrap.dedent(blocks_yaml), "  ") + guesses, "g.yaml")


def topo_error(blocks_yaml, **kw):
    with pytest.raises(TopologyError) as err:
        sheet(blocks_yaml, **kw)
    assert err.value.file == "g.yaml"
    return err.value


def test_nodes_and_edges():
    G = build_graph(sheet("""\
        h: {kind: heater, from: a, to: b, T_out: 30 degC}
        v: {kind: throttle, from: b, to: c, P_out: 10 barg}
        """))
    assert G.nodes[feed_node("a")]["role"] == "feed"
    assert G.nodes["h"]["role"] == "block" and G.nodes["h"]["kind"] == "heater"
    assert G.nodes[product_node("c")]["role"] == "product"
    assert sorted(G.edges(keys=True)) == [("feed:a", "h", "a"), ("h", "v", "b"),
                                          ("v", "product:c", "c")]
    assert G.edges["h", "v", "b"]["from_port"] == "out" and G.edges["h", "v", "b"]["to_port"] == "in"
    assert [s.blocks for s in solve_order(G)] == [("h",), ("v",)]


def test_stream_produced_twice():
    e = topo_error("""\
        s: {kind: splitter, from: a, to: {x: 0.5, y: rest}}
        h: {kind: heater, from: x, to: b, T_out: 30 degC}
        k: {kind: heater, from: y, to: b, T_out: 30 degC}
        """)
    assert e.line == 7 and "stream 'b' is produced twice: by 'h' (line 6) and by 'k'" in e.message


def test_stream_consumed_twice():
    e = topo_error("""\
        h: {kind: heater, from: a, to: b, T_out: 30 degC}
        v: {kind: throttle, from: b, to: c, P_out: 10 barg}
        w: {kind: throttle, from: b, to: d, P_out: 10 barg}
        """)
    assert e.line == 7 and "taken by two blocks: 'v' (line 6) and 'w'" in e.message
    assert "splitter" in e.message


def test_stream_never_produced():
    e = topo_error("""\
        h: {kind: heater, from: a, to: warm, T_out: 30 degC}
        v: {kind: throttle, from: wram, to: c, P_out: 10 barg}
        """)
    assert e.line == 6 and e.field == "equipment.v"
    assert "stream 'wram' has no producer" in e.message and "did you mean 'warm'" in e.message


def test_feed_never_consumed():
    e = topo_error("""\
        h: {kind: heater, from: a, to: b, T_out: 30 degC}
        """, head=HEAD.replace("equipment:", "  spare: {T: 20 degC, P: 60 barg, flow: 1 kmol/h}\n"
                                              "equipment:"))
    assert e.line == 4 and "feed 'spare' is not taken by any block" in e.message


def test_feed_name_clashes_with_a_stream():
    e = topo_error("""\
        h: {kind: heater, from: a, to: b, T_out: 30 degC}
        v: {kind: throttle, from: b, to: a, P_out: 10 barg}
        """)
    assert e.line == 6 and "has the name of a feed (line 3)" in e.message


def test_same_stream_in_and_out():
    e = topo_error("""\
        h: {kind: heater, from: a, to: a2, T_out: 30 degC}
        k: {kind: heater, from: a2, to: a2, T_out: 30 degC}
        """)
    assert "both an inlet and an outlet of block 'k'" in e.message


def test_parallel_streams_between_two_blocks():
    fs = sheet("""\
        sep: {kind: separator, from: a, to: {vapour: v, liquid: l}}
        mix: {kind: mixer, from: [v, l], to: m}
        """)
    G = build_graph(fs)
    assert sorted(k for _, _, k in G.edges("sep", keys=True)) == ["l", "v"]
    assert [s.blocks for s in solve_order(G)] == [("sep",), ("mix",)]


def test_recycle_tears_the_backward_stream():
    steps = solve_order(build_graph(sheet("""\
        mix: {kind: mixer, from: [a, back], to: m}
        cool: {kind: cooler, from: m, to: c, T_out: -20 degC}
        split: {kind: splitter, from: c, to: {product: 0.1, recycle: rest}}
        heat: {kind: heater, from: recycle, to: back, duty: 50 kW}
        """)))
    (loop,) = steps
    assert loop.is_loop and not loop.is_closed and loop.exact
    assert loop.tears == ("back",)
    assert loop.blocks == ("mix", "cool", "split", "heat")


def test_blocks_before_and_after_a_loop():
    steps = solve_order(build_graph(sheet("""\
        pre: {kind: heater, from: a, to: a1, T_out: 25 degC}
        mix: {kind: mixer, from: [a1, back], to: m}
        split: {kind: splitter, from: m, to: {out: 0.5, back: rest}}
        post: {kind: throttle, from: out, to: z, P_out: 5 barg}
        """)))
    assert [(s.blocks, s.tears) for s in steps] == [(("pre",), ()), (("mix", "split"), ("back",)),
                                                   (("post",), ())]


def test_closed_loop_needs_a_guess():
    body = """\
        comp: {kind: compressor, from: suction, to: disch, P_out: 16 bar, efficiency: 0.75}
        cond: {kind: cooler, from: disch, to: liq, T_out: 40 degC}
        valve: {kind: throttle, from: liq, to: flashed, P_out: 1.7 bar}
        chill: {kind: heater, from: flashed, to: suction, T_out: -25 degC}
        """
    head = "gas: {composition: {propane: 1.0}}\nequipment:\n"
    with pytest.raises(TopologyError) as err:
        sheet(body, head=head)
        solve_order(build_graph(sheet(body, head=head)))
    assert "closed loop" in err.value.message and "guesses" in err.value.message
    assert err.value.line == 3
    fs = sheet(body, head=head, guesses="guesses:\n  liq: {T: 40 degC, P: 16 bar, flow: 100 kmol/h}\n")
    (loop,) = solve_order(build_graph(fs))
    assert loop.is_closed and loop.tears == ("liq",)
    assert loop.blocks == ("valve", "chill", "comp", "cond")


def test_guess_for_unknown_stream():
    with pytest.raises(TopologyError, match="not a stream of this flowsheet"):
        sheet("h: {kind: heater, from: a, to: b, T_out: 30 degC}\n",
              guesses="guesses:\n  zz: {T: 40 degC, P: 16 bar, flow: 100 kmol/h}\n")


def test_guessed_stream_preferred_as_tear():
    body = """\
        mix: {kind: mixer, from: [a, back], to: m}
        cool: {kind: cooler, from: m, to: c, T_out: -20 degC}
        split: {kind: splitter, from: c, to: {product: 0.1, recycle: rest}}
        heat: {kind: heater, from: recycle, to: back, duty: 50 kW}
        """
    fs = sheet(body, guesses="guesses:\n  c: {T: -20 degC, P: 60 barg, flow: 900 kmol/h}\n")
    (loop,) = solve_order(build_graph(fs))
    assert loop.tears == ("c",)


# --- exact minimum tear sets -------------------------------------------------------------------

def _fs_from_edges(n, edges):
    """A flowsheet whose blocks are mixers/splitters joined as ``edges`` (u -> v)."""
    ins = {i: [] for i in range(n)}
    outs = {i: [] for i in range(n)}
    for k, (u, v) in enumerate(edges):
        outs[u].append(f"s{k}")
        ins[v].append(f"s{k}")
    feeds = {}
    blocks = {}
    for i in range(n):
        ins[i].append(f"f{i}")
        feeds[f"f{i}"] = FeedSpec(f"f{i}", 300.0, 50e5, 1.0)
        outs[i].append(f"p{i}")
        blocks[f"b{i}"] = BlockSpec(f"b{i}", "mixer", {f"in{j}": s for j, s in enumerate(ins[i])},
                                    {s: s for s in outs[i]}, {})
    return SheetSpec("t", GasSpec("peng-robinson", {"methane": 1.0}), feeds, blocks)


def _brute_force_minimum(G):
    """Fewest streams whose removal leaves the block graph acyclic (all subsets)."""
    blocks = [n for n, d in G.nodes(data=True) if d["role"] == "block"]
    H = G.subgraph(blocks)
    edges = list(H.edges(keys=True))
    for k in range(len(edges) + 1):
        for cut in itertools.combinations(edges, k):
            R = nx.MultiDiGraph(H)
            R.remove_edges_from(cut)
            if nx.is_directed_acyclic_graph(R):
                return k
    raise AssertionError("unreachable")


def test_two_cycles_sharing_one_stream_need_one_tear():
    # b0 -> b1 -> b2 -> b0 and b0 -> b1 -> b3 -> b0 share b0->b1
    G = build_graph(_fs_from_edges(4, [(0, 1), (1, 2), (2, 0), (1, 3), (3, 0)]))
    (loop,) = solve_order(G)
    assert loop.tears == ("s0",) and loop.exact


@settings(max_examples=60, deadline=None)
@given(st.integers(min_value=2, max_value=5).flatmap(
    lambda n: st.tuples(st.just(n), st.lists(
        st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)).filter(lambda e: e[0] != e[1]),
        min_size=1, max_size=8))))
def test_tears_are_a_minimum_feedback_set(case):
    n, edges = case
    G = build_graph(_fs_from_edges(n, edges))
    steps = solve_order(G)
    tears = [t for s in steps for t in s.tears]
    assert len(tears) == _brute_force_minimum(G)
    # cutting the tears leaves no cycle, and each step's block order respects the remaining edges
    R = nx.MultiDiGraph(G)
    R.remove_edges_from([(u, v, k) for u, v, k in G.edges(keys=True) if k in tears])
    assert nx.is_directed_acyclic_graph(R)
    position = {b: i for i, b in enumerate(b for s in steps for b in s.blocks)}
    for u, v, k in R.edges(keys=True):
        if u in position and v in position:
            assert position[u] < position[v]
