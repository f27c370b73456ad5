"""Typed options: one :class:`Option` class for rule options, hazard-prover options, delay
options and the scalar configuration keys, so every option is declared once (name, type,
default, documentation, allowed values, lower bound) and checked one way.

    >>> jobs = Option("jobs", int, None, "worker processes", minimum=1)
    >>> jobs.coerce(2)
    2
    >>> jobs.coerce(0, label="jobs")
    Traceback (most recent call last):
    ...
    hazlint.errors.ConfigError: error: jobs must be at least 1, got 0
    >>> OptionTable("delays", DELAY_OPTIONS, "delay").resolve({"sdf_corner": "max"})
    {'sdf_corner': 'max'}
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Mapping

from .errors import ConfigError

# the types in the configuration file's words (TOML's type names)
_TYPE_NAMES = {bool: "boolean", int: "integer", float: "float", str: "string",
               list: "array of strings"}


@dataclass(frozen=True)
class Option:
    """One typed option. ``type`` is bool, int, float, str or list (of str); ``choices`` (when
    given) are the allowed values; ``minimum`` (numbers) the smallest one. A default of None
    means "not set" (the run then decides). ``old_name_of`` names the option this one is an
    old spelling of: a value given for it goes to that option, with a deprecation note, and
    ``explain`` lists it only there."""

    name: str
    type: type
    default: Any
    help: str
    choices: tuple = ()
    minimum: float | None = None
    old_name_of: str = ""

    @property
    def doc(self) -> str:
        return self.help

    @property
    def type_name(self) -> str:
        return _TYPE_NAMES[self.type]

    def coerce(self, value: Any, where: str = "", label: str | None = None) -> Any:
        """``value`` checked (and an int given for a float option made a float); a
        :class:`~hazlint.errors.ConfigError` starting with ``where`` and naming ``label``
        (default: ``option 'NAME'``) otherwise."""
        label = label or f"option '{self.name}'"
        t = self.type
        if t is bool:
            ok = isinstance(value, bool)
        elif t is int:
            ok = isinstance(value, int) and not isinstance(value, bool)
        elif t is float:
            ok = isinstance(value, (int, float)) and not isinstance(value, bool)
            value = float(value) if ok else value
        elif t is str:
            ok = isinstance(value, str)
        elif t is list:
            ok = isinstance(value, list) and all(isinstance(v, str) for v in value)
        else:
            ok = False
        if not ok:
            raise ConfigError(f"{where}{label} must be {self.type_name}, got {value!r}")
        if self.choices and value not in self.choices:
            raise ConfigError(f"{where}{label} must be one of "
                              f"{', '.join(map(str, self.choices))}; got {value!r}")
        if self.minimum is not None and not value >= self.minimum:     # NaN too
            raise ConfigError(f"{where}{label} must be at least {self.minimum:g}, got {value!r}")
        return value


@dataclass(frozen=True)
class OptionTable:
    """A named table of options, as written in the configuration (``[prove]``)."""

    name: str
    options: tuple[Option, ...]
    what: str = ""                  # "hazard-prover": words for the messages

    def defaults(self) -> dict[str, Any]:
        return {o.name: o.default for o in self.options}

    def get(self, name: str) -> Option | None:
        for o in self.options:
            if o.name == name:
                return o
        return None

    def check(self, given: Mapping[str, Any] | None, where: str = "") -> dict[str, Any]:
        """The options ``given`` (names with ``-`` read as ``_``), each checked; unknown names
        and bad values are a :class:`~hazlint.errors.ConfigError` naming ``TABLE.NAME``."""
        out = {}
        for k, v in (given or {}).items():
            name = str(k).replace("-", "_")
            opt = self.get(name)
            if opt is None:
                raise ConfigError(f"{where}unknown {self.what} option '{self.name}.{k}' "
                                  f"(known: {', '.join(sorted(o.name for o in self.options))})")
            out[name] = opt.coerce(v, where, label=f"{self.name}.{k}")
        return out

    def resolve(self, given: Mapping[str, Any] | None, where: str = "") -> dict[str, Any]:
        """The defaults overlaid with the checked ``given`` options."""
        return dict(self.defaults(), **self.check(given, where))


# ---------------------------------------------------------------------------------------------
# hazard prover (configuration table ``prove``); analysis.prove.DEFAULTS is PROVE.defaults()

PROVE_OPTIONS: tuple[Option, ...] = (
    Option("node_budget", int, 100_000, "BDD live nodes per check", minimum=0),
    Option("conflict_budget", int, 20_000, "SAT conflicts per query", minimum=0),
    Option("check_time", float, 2.0, "seconds per check (BDD and SAT)", minimum=0),
    Option("sim_vectors", int, 256, "random side-input vectors simulated at once", minimum=0),
    Option("max_sources", int, 12, "changing sources tried per finding", minimum=0),
    Option("max_sinks", int, 3, "sinks classified per reconvergence finding", minimum=0),
    Option("max_findings", int, 200, "shown findings per run given timed replay, delay "
           "search and waveform", minimum=0),
    Option("search_trials", int, 150, "timed simulations when searching a glitching delay "
           "assignment", minimum=0),
    Option("search_events", int, 500_000, "simulation events per delay search, over its "
           "trials (0: none)", minimum=0),
    Option("bdd_circuit_time", float, 10.0, "seconds for the shared BDD of a batched pass, "
           "then SAT", minimum=0),
    Option("batch_time", float, 120.0, "seconds for the SAT part of a batched pass "
           "(0: no limit)", minimum=0),
    Option("engine", str, "sat", "batched pass: sat (one incremental solver) or bdd (a "
           "shared BDD, then SAT past its budget)", choices=("sat", "bdd")),
    Option("max_changes", int, 0, "largest set of simultaneously changing sources examined "
           "at a glitch-sensitive sink (0: every set the change model allows)", minimum=0),
    Option("engine_sources", int, 16, "cones with more sources go to SAT without a BDD try",
           minimum=0),
    Option("show_proven_absent", bool, False, "also report findings proven hazard-free"),
    Option("waveforms", bool, True, "draw the witness waveform of proven hazards"),
    Option("seed", int, 0, "seed of the random side-input vectors"),
)
PROVE = OptionTable("prove", PROVE_OPTIONS, "hazard-prover")

# ---------------------------------------------------------------------------------------------
# delays: how SDF values become the (min, max) delay of each arc

SDF_CORNERS = ("min", "typ", "max", "minmax")
DELAY_OPTIONS: tuple[Option, ...] = (
    Option("sdf_corner", str, "minmax", "which values of the SDF (min:typ:max) triples become "
           "the delays: min, typ or max for both bounds, or minmax (min as the lower and max "
           "as the upper bound, the spread hazard analysis needs)", choices=SDF_CORNERS),
)
DELAYS = OptionTable("delays", DELAY_OPTIONS, "delay")
SDF_CORNER: str = DELAYS.defaults()["sdf_corner"]

# ---------------------------------------------------------------------------------------------
# scalar configuration keys with a lower bound or a set of values

FAIL_LEVELS = ("error", "warning", "info", "never")
RUN_OPTIONS: tuple[Option, ...] = (
    Option("fail_on", str, "warning", "lowest severity that makes the exit code 1",
           choices=FAIL_LEVELS),
    Option("cache_limit_mb", int, None, "size limit of the cache folder in MB (0: none)",
           minimum=0),
    Option("jobs", int, None, "worker processes (default: every core for the prover)",
           minimum=1),
    Option("memory_as_registers_max_bits", int, 4096, "variable arrays up to this many bits "
           "become registers, larger ones memory nodes", minimum=0),
    Option("time_budget", float, None, "seconds for the whole run (0: none)", minimum=0),
) + DELAY_OPTIONS
RUN = OptionTable("", RUN_OPTIONS, "run")
