"""The worked examples of DEVELOPERS.md ("A new front end", "A new delay model"): a toy front end
registered through the front-end registry and a toy delay model, each run through the real
stages after it (registry, elaborator, command line; timing graph, timed simulator)."""
import itertools

import networkx as nx
import pytest

from hazlint import ir
from hazlint.analysis.circuits import build_graph
from hazlint.analysis.timedsim import pin_delay
from hazlint.analysis.timing_graph import TimingGraph
from hazlint.delays.model import GRAPH_DELAYS
from hazlint.elaborate import elaborate
from hazlint.frontends import registry
from hazlint.netlist.library import Delay

# a "gate list": one gate primitive per line, output first (our own toy format)
GATE_LIST = """\
# press interlock: both hands on the buttons and the guard closed open the valve
module interlock
input guard_closed two_hand_left two_hand_right
output valve_enable
and both_hands two_hand_left two_hand_right
and valve_enable both_hands guard_closed
"""


def read_gate_lists(paths, include_dirs=(), defines=None, root=None, jobs=1, cache=None,
                    texts=None, progress=None, tolerant=False):
    """A front end: files -> [ir.SourceFile], with every item located at its line."""
    out = []
    for path in paths:
        text = (texts or {}).get(path)
        if text is None:
            with open(path, encoding="utf-8") as fh:
                text = fh.read()
        module = None
        for no, line in enumerate(text.splitlines(), 1):
            words = line.split("#")[0].split()
            if not words:
                continue
            loc = ir.Loc(path, no, 1)
            head, *rest = words
            if head == "module":
                module = ir.Module(rest[0], loc=loc)
            elif head in ("input", "output"):
                for name in rest:
                    module.port_order.append(name)
                    module.ports[name] = ir.Port(name, head, loc=loc)
            else:
                if rest[0] not in module.ports:
                    module.items.append(ir.Net(rest[0], loc=loc))
                module.items.append(ir.Instance(head, "", [(None, ("id", n)) for n in rest],
                                                loc=loc))
        out.append(ir.SourceFile(path, modules=[module]))
    return out


@pytest.fixture
def gate_list_front_end(monkeypatch):
    monkeypatch.setattr(registry, "READERS", dict(registry.READERS))
    monkeypatch.setattr(registry, "CHOICES", registry.CHOICES)
    registry.register("gatelist", read_gate_lists)
    return "gatelist"


def test_toy_front_end_through_the_registry(tmp_path, gate_list_front_end):
    path = tmp_path / "interlock.gl"
    path.write_text(GATE_LIST)
    sources = registry.read_sources([str(path)], frontend=gate_list_front_end)
    design = elaborate(sources)
    # oracle: the AND of the three inputs the file describes, by enumeration of all 8 vectors
    names = ["guard_closed", "two_hand_left", "two_hand_right"]
    for bits in itertools.product((0, 1), repeat=3):
        out = design.evaluate(dict(zip(names, bits)))
        assert out["valve_enable"] == int(all(bits)), bits
    # every gate keeps the line of the file it came from
    lines = sorted(d["line"] for _, d in design.graph.nodes(data=True) if d["kind"] == "gate")
    assert lines == [5, 6]


def test_toy_front_end_from_the_command_line(tmp_path, capsys, gate_list_front_end):
    from hazlint.cli import main
    path = tmp_path / "interlock.gl"
    path.write_text(GATE_LIST)
    code = main(["check", "--no-cache", "--frontend", gate_list_front_end, str(path)])
    out, err = capsys.readouterr()
    assert code == 0, out + err       # an AND tree of independent inputs has no reconvergence
    with pytest.raises(SystemExit):   # an unregistered name is still refused
        main(["check", "--no-cache", "--frontend", "no-such-reader", str(path)])


class Derated:
    """A delay model: every pin and wire delay of another model times ``factor`` (derating a
    corner for temperature or voltage is common practice)."""

    def __init__(self, factor, base=GRAPH_DELAYS):
        self.factor, self.base = factor, base

    def pin(self, node, pin):
        d = self.base.pin(node, pin)
        f = self.factor
        return Delay(d.rise_min * f, d.rise_max * f, d.fall_min * f, d.fall_max * f)

    def wire(self, edge):
        w = self.base.wire(edge)
        return None if w is None else Delay(*(v * self.factor for v in
                                              (w.rise_min, w.rise_max, w.fall_min, w.fall_max)))


def _longest_arrival(g, weight_of):
    # oracle: networkx' longest path in the DAG with the delay of every (driver, gate) pin
    h = nx.DiGraph()
    for n, d in g.nodes(data=True):
        for pin, u in enumerate(d.get("inputs") or []):
            h.add_edge(u, n, w=weight_of(d, pin) if d["kind"] == "gate" else 0.0)
    return nx.dag_longest_path_length(h, weight="w")


def test_toy_delay_model_is_what_the_analyses_read():
    g = build_graph(["a", "b"], [("n1", "nand", ["a", "b"], 2.0), ("n2", "nand", ["a", "n1"], 1.0),
                                 ("y", "nand", ["n1", "n2"], 3.0)], ["y"])
    model = Derated(1.5)
    default = TimingGraph.build(g)
    derated = TimingGraph.build(g, delays=model)
    for row_d, row_x in zip(default.fanin, derated.fanin):
        for (_, _, lo, hi), (_, _, lo_x, hi_x) in zip(row_d, row_x):
            assert (lo_x, hi_x) == (lo * 1.5, hi * 1.5)
    # the slowest path, by the timing graph and by networkx
    worst = max(hi for row in derated.fanin for (_, _, _, hi) in row)
    assert worst == 4.5
    assert _longest_arrival(g, lambda d, p: model.pin(d, p).max) == pytest.approx(1.5 * 6.0)
    # the timed simulator asks the same model
    d = g.nodes["y"]
    assert pin_delay(d, 0, "max", delays=model) == (4.5, 4.5)
    assert pin_delay(d, 0, "max") == (3.0, 3.0)
