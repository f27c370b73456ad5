"""What machine-readable reports show of a finding's evidence: net names, not node ids.

The gate graph names a sink pin with an internal id (``@u_fault.fault_q.reset``, with ``#2``
when the same pin name recurs); the prover keeps its witness both by net name and by node id.
JSON and SARIF reports carry the names a designer reads (``u_fault.fault_q.reset``) and one
witness (``witness.inputs`` held values and ``witness.transition`` changes, by net name); the
node-id copies stay inside hazlint (the result cache, ``prove``'s waveform files).

Which keys hold node ids, each evidence class declares (``NODE_FIELDS``,
:mod:`hazlint.findings.evidence`); a plain dict from a rule of another package names them
``*_node`` / ``*_nodes``.

    >>> from hazlint.findings.evidence import AsyncSinkEvidence, Verdict, with_verdict
    >>> ev = AsyncSinkEvidence(sink_node="@u.q.reset#2", role="reset", source_nodes=["@a"],
    ...                        quiet_nodes=[], stems=[], cone_gates=1, key="async:1")
    >>> out = public_evidence(with_verdict(ev, Verdict(
    ...     classification="static-1-hazard", witness={"inputs": {"b": 1},
    ...     "transition": {"a": [0, 1]}, "before_nodes": {}, "after_nodes": {}})))
    >>> out["sink_node"], out["source_nodes"], out["witness"]
    ('u.q.reset', ['a'], {'inputs': {'b': 1}, 'transition': {'a': [0, 1]}})
"""
from __future__ import annotations

import re
from typing import Any, Mapping

from .evidence import typed

_INTERNAL_WITNESS = ("before_nodes", "after_nodes")
_SUFFIX = re.compile(r"#\d+$")


def net_name(node: str) -> str:
    """The net or pin name of a node id."""
    if node.startswith("@"):
        return _SUFFIX.sub("", node[1:])
    if node.startswith("<sink>"):
        return _SUFFIX.sub("", node[len("<sink>"):])
    return node


def _names(v: Any) -> Any:
    if isinstance(v, str):
        return net_name(v)
    if isinstance(v, (list, tuple)):
        return [net_name(x) if isinstance(x, str) else x for x in v]
    return v


def public_evidence(evidence: Mapping[str, Any]) -> dict[str, Any]:
    """A copy of ``evidence`` with node ids as net names and one witness (see the module
    docstring)."""
    nodes = typed(evidence).node_fields()
    out: dict[str, Any] = {}
    for k, v in evidence.items():
        if k in nodes:
            out[k] = _names(v)
        elif k == "witness" and isinstance(v, Mapping):
            out[k] = {wk: wv for wk, wv in v.items() if wk not in _INTERNAL_WITNESS}
        else:
            out[k] = v
    return out
