"""Arrays and memories (``reg [7:0] ram [0:15]``, ``wire [3:0] w [0:3][0:3]``).

Two models, chosen per array by its size (``memory_as_registers_max_bits``, default
:data:`DEFAULT_MAX_BITS` bits):

* **registers** (every wire array, and variable arrays up to the limit): each word is a net or
  variable of its own (``ram[3][7]`` is bit 7 of word 3). A write ``ram[a] <= d`` in a clocked
  block gives every word a flip-flop whose data is ``(a == k) ? d : ram[k]`` (a decoded write
  enable), a read ``ram[a]`` is a multiplexer tree over the words: what a synthesis tool builds
  when it maps a small memory to flip-flops, and exact for glitch analysis.
* **memory node** (variable arrays above the limit, which a designer maps to a RAM macro): each
  write is a write port whose clock, enable, address and data are sinks (the clock pin is
  glitch-sensitive like any clock pin; enable, address and data are sampled at the clock edge);
  each read is a read port whose address bits are sinks and whose data bits are sources (state
  nodes with a ``memory`` attribute). The path from a read address through the array to the read
  data is not modelled: when such read data reaches a glitch-sensitive pin, a warning says so.

An array kept as registers and written from two always blocks (a true dual-port RAM) has two
drivers per word, which the flattener reports; a memory node takes any number of write ports.
"""
from __future__ import annotations

from dataclasses import dataclass, field

from ..diagnostics import Severity
from ..netlist.graph import ASYNC_ROLES
from .common import C0, BlackBoxModule, expr_text
from .selects import MemWrite
from .scope import NetInfo, index_range

DEFAULT_MAX_BITS = 4096


@dataclass
class Memory:
    """An array kept whole as a memory node."""

    name: str                   # hierarchical name of the array
    words: list                 # word indices
    indices: list | None        # packed bit indices of a word, LSB first
    signed: bool
    instance: str
    loc: object = None
    write_ports: list = field(default_factory=list)
    read_ports: list = field(default_factory=list)

    @property
    def width(self) -> int:
        return len(self.indices) if self.indices else 1

    def record(self, node_of) -> dict:
        """Plain data for the Design; ``node_of`` maps a net bit to its graph node."""
        loc = self.loc
        return {"name": self.name, "words": len(self.words), "width": self.width,
                "path": loc.path if loc else "", "line": loc.line if loc else 0,
                "write_ports": len(self.write_ports), "read_ports": len(self.read_ports),
                "read_data": [node_of(n) for p in self.read_ports for n in p["data"]]}


class MemoryElaborator:
    """Array declarations, memory-node reads and writes (a mixin of the Elaborator)."""

    memory_max_bits: int = DEFAULT_MAX_BITS

    def array_dims(self, scope, array, loc) -> list:
        dims = []
        for msb_e, lsb_e in array:
            # unpacked dimensions run left to right as written: [0:15] is 0, 1, ... 15
            dims.append(index_range(self.const(lsb_e, scope, loc), self.const(msb_e, scope, loc)))
        return dims

    def declare_array(self, scope, info: NetInfo, kind: str, loc) -> None:
        """Words of an array as nets, or a memory node for a large variable array."""
        n_words = 1
        for d in info.dims:
            n_words *= len(d)
        width = len(info.indices) if info.indices else 1
        if kind != "wire" and kind not in ("tri", "wand", "wor") and len(info.dims) == 1 \
                and n_words * width > self.memory_max_bits:
            info.memory = Memory(name=info.base, words=list(info.dims[0]), indices=info.indices,
                                 signed=info.signed, instance=scope.instance, loc=loc)
            self.__dict__.setdefault("memories", []).append(info.memory)
            self.note(f"memory '{info.base}' ({n_words} words x {width} bits, more than "
                      f"{self.memory_max_bits} bits) is kept as a memory node: writes are "
                      "sinks, read data are sources (memory_as_registers_max_bits sets the "
                      "limit)", loc, scope.instance)
            return
        owner = self.__dict__.setdefault("_array_of_bit", {})
        for w in info.words():
            for b in w.bits():
                self.parent.setdefault(b, b)
                self.declared.add(b)
                owner[b] = (info, loc, scope.instance)

    def undriven_word(self, bit: str) -> bool:
        """A word bit of an array that is read but never written (a table filled by an
        ``initial`` block or ``$readmemh``): one warning for the array; True when ``bit`` is
        such a word bit."""
        found = self.__dict__.get("_array_of_bit", {}).get(bit)
        if found is None:
            return False
        info, loc, instance = found
        self.note(f"words of '{info.base}' are read but never written by the design (contents "
                  "from an initial block or a file are not modelled): they are free inputs "
                  "for analysis", loc, instance, key=("undriven-array", info.base),
                  severity=Severity.WARNING)
        return True

    # ---------------------------------------------------------------- reads
    def memory_read(self, scope, info, idxs, pick, loc, env) -> list[str]:
        mem: Memory = info.memory
        addr = self.self_bits(idxs[0], scope, loc, env)
        cache = self.__dict__.setdefault("_mem_reads", {})
        key = (mem.name, tuple(addr))
        word = cache.get(key)
        if word is None:
            k = len(mem.read_ports)
            word = NetInfo(base=f"{mem.name}$rd{k}", indices=mem.indices, signed=mem.signed)
            path = f"{mem.instance}.{mem.name.rsplit('.', 1)[-1]}"
            port = {"addr": [], "data": word.bits()}
            for b in word.bits():
                self._add_driver("state", b, op="buf", instance=path, loc=loc, cell="memory",
                                 memory=mem.name, state="rdata")
            for i, a in enumerate(addr):
                port["addr"].append(self.add_sink(a, "data", f"{mem.name}.raddr{k}[{i}]", loc,
                                                  path, memory=mem.name))
            mem.read_ports.append(port)
            cache[key] = word
        return pick(word)

    # ---------------------------------------------------------------- writes
    def memory_target(self, scope, info, idxs, rest, final, loc, env) -> MemWrite:
        mem: Memory = info.memory
        addr = self.self_bits(idxs[0], scope, loc, env)
        word = NetInfo(base="", indices=mem.indices)
        if rest is not None:
            k = self.const_try(rest, scope, loc, env)
            if k is None:
                raise BlackBoxModule(f"variable bit index into a word of memory '{mem.name}' "
                                     f"(in '{expr_text(rest)}')", loc)
            if (word.indices is not None and k not in word.indices) or (
                    word.indices is None and k != 0):
                raise BlackBoxModule(f"bit [{k}] outside the words of memory '{mem.name}'", loc)
            positions = [word.indices.index(k) if word.indices else 0]
        elif final is not None:
            if final[0] != "part":
                start = self.const_try(final[2], scope, loc, env)
                if start is None:
                    raise BlackBoxModule(f"variable part select of a word of memory "
                                         f"'{mem.name}'", loc)
            a, b, _ = self._part_range(word, final, scope, loc, env)
            step = 1 if b >= a else -1
            if word.indices is None or not all(i in word.indices
                                               for i in range(a, b + step, step)):
                raise BlackBoxModule(f"part select [{b}:{a}] outside the words of memory "
                                     f"'{mem.name}'", loc)
            positions = [word.indices.index(i) for i in range(a, b + step, step)]
        else:
            positions = list(range(mem.width))
        return MemWrite(mem, addr, positions)

    def memory_write(self, scope, mw: MemWrite, data, st, loc) -> None:
        """A write statement: a new write port whose fields ride in the block's value trees
        (so its enable is the condition under which the statement runs)."""
        port = {"memory": mw.memory, "positions": mw.positions, "loc": loc,
                "n_addr": len(mw.addr)}
        key = id(port)
        st.env[("mem", key, "en")] = "1'b1"
        for i, a in enumerate(mw.addr):
            st.env[("mem", key, "addr", i)] = a
        for j, d in enumerate(data):
            st.env[("mem", key, "data", j)] = d
        st.ports.append(port)

    def memory_ports_done(self, scope, al, st, clock) -> None:
        """Sinks of the write ports a clocked block opened."""
        clk, edge = clock
        for port in st.ports:
            mem: Memory = port["memory"]
            key = id(port)
            k = len(mem.write_ports)
            path = f"{mem.instance}.{mem.name.rsplit('.', 1)[-1]}"
            loc = port["loc"]
            en = self.realize(scope, st.env.get(("mem", key, "en"), C0), C0, loc)
            pins = {"clock": self.add_sink(clk, "clock", f"{mem.name}.wclk{k}", loc, path,
                                           active=edge, memory=mem.name),
                    "enable": self.add_sink(en, "data", f"{mem.name}.we{k}", loc, path,
                                            memory=mem.name)}
            for i in range(port["n_addr"]):
                v = self._data_of(st.env.get(("mem", key, "addr", i), C0))
                pins[f"addr{i}"] = self.add_sink(self.realize(scope, v, C0, loc), "data",
                                                 f"{mem.name}.waddr{k}[{i}]", loc, path,
                                                 memory=mem.name)
            for j, pos in enumerate(port["positions"]):
                v = self._data_of(st.env.get(("mem", key, "data", j), C0))
                bit = mem.indices[pos] if mem.indices else 0
                pins[f"data{bit}"] = self.add_sink(self.realize(scope, v, C0, loc), "data",
                                                   f"{mem.name}.wdata{k}[{bit}]", loc, path,
                                                   memory=mem.name)
            mem.write_ports.append(pins)

    def memory_records(self, node_of) -> list[dict]:
        return [m.record(node_of) for m in self.__dict__.get("memories", [])]

    def check_memory_reads(self, design) -> None:
        """Warn when the data of a memory node's read port reaches a glitch-sensitive pin:
        the read path through the array is not analysed there."""
        g = design.graph
        records = {r["name"]: r for r in design.memories}
        for m in self.__dict__.get("memories", []):
            seen: set = set()
            stack = [n for n in records[m.name]["read_data"] if n in g]
            hits = []
            while stack:
                n = stack.pop()
                for v in g.successors(n):
                    if v in seen:
                        continue
                    seen.add(v)
                    d = g.nodes[v]
                    if d["kind"] == "sink":
                        if d.get("role") in ASYNC_ROLES:
                            hits.append(d.get("name", v))
                    elif d["kind"] == "gate":
                        stack.append(v)
            if hits:
                self.note(f"read data of memory '{m.name}' (a memory node) reach the "
                          f"glitch-sensitive pin(s) {', '.join(sorted(hits)[:4])}: the path "
                          "from the read address through the memory is not analysed; raise "
                          "memory_as_registers_max_bits to model the memory as registers",
                          m.loc, m.instance, severity=Severity.WARNING)
