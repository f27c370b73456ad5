"""Project configuration: ``[tool.hazlint]`` in pyproject.toml or a ``hazlint.toml``.

Discovery walks upward from the working directory; in each directory a ``hazlint.toml`` wins over
a ``pyproject.toml`` and a pyproject.toml counts only if it has a ``[tool.hazlint]`` table. Paths in
the file are relative to the file's directory, which is also the project root that reports print
paths against. An unknown key is a :class:`~hazlint.errors.ConfigError` naming the key and where it
is written.

Keys (all optional)::

    files = ["rtl/*.v"]             # sources (globs allowed) used when none are given
    top = "press_top"               # or a list of top modules
    include_dirs = ["rtl/include"]
    defines = { SIM = "1" }
    cells = { ff = { inputs = ["CK", "D"], outputs = { Q = "IQ" },
                     ff = { clocked_on = "CK", next_state = "D" } } }
    liberty = ["lib/cells.lib"]
    sdf = "build/press.sdf"
    sdf_corner = "minmax"           # min | typ | max | minmax: which SDF values are the delays
    select = ["combinational-loop"]          # run only these rules
    ignore = ["unbalanced-reconvergence"]
    severity = { unbalanced-reconvergence = "error" }
    fail_on = "warning"             # error | warning | info | never
    async_outputs = ["valve_enable"]   # output ports whose glitches do harm (globs allowed)
    static_inputs = ["maint_key"]        # inputs that are synchronous or quasi-static (globs)
    one_at_a_time = { wr_ptr = ["u_fifo.wr_gray"] }  # groups changing one member at a time
    one_hot = { state = ["u_ctl.state_q"] }          # groups with at most one member at 1
    cell_model = "atomic"           # or "sum-of-products" (see hazlint.analysis.cellmodel)
    accept_file = "hazlint-waivers.toml"
    baseline = "hazlint-baseline.json"
    cache_dir = ".hazlint-cache"
    cache_limit_mb = 2048           # size limit of the cache folder (0: none)
    jobs = 2                        # worker processes (default: every core for the prover)
    scheduler = "tcp://10.0.0.5:8786"   # prover work on a Dask cluster (extra 'cluster')
    frontend = "auto"               # auto | pyverilog | slang (auto: .sv files through slang)
    format = "sarif"                # report format of `check` (`hazlint formats` lists them)
    prove = { }                     # hazard-prover options (hazlint.options.PROVE_OPTIONS)
    memory_as_registers_max_bits = 4096   # larger variable arrays become memory nodes
    time_budget = 60                # seconds for the whole run (0: none); see hazlint.budget
    limits = { vector_width = 1048576 }   # size limits; see hazlint.limits

    [rules.unbalanced-reconvergence]    # rule options (see ``hazlint explain RULE``)
    min_skew = 0.5
"""
from __future__ import annotations

import glob
import os
import re
import sys
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

from .diagnostics import Severity
from .errors import ConfigError
from .options import DELAYS, PROVE, RUN

CONFIG_NAMES = ("hazlint.toml", "pyproject.toml")

# key -> (expected python types, human description)
KEYS: dict[str, tuple[tuple[type, ...], str]] = {
    "files": ((list, str), "a list of paths or globs"),
    "top": ((list, str), "a module name or a list of them"),
    "include_dirs": ((list, str), "a list of directories"),
    "defines": ((dict, list), "a table of macro = value"),
    "cells": ((dict,), "a table of cell tables"),
    "liberty": ((list, str), "a list of .lib paths"),
    "sdf": ((list, str), "an SDF path"),
    "sdf_corner": ((str,), "min, typ, max or minmax"),
    "select": ((list, str), "a list of rule ids"),
    "ignore": ((list, str), "a list of rule ids"),
    "severity": ((dict,), "a table of rule id = severity"),
    "fail_on": ((str,), "error, warning, info or never"),
    "rules": ((dict,), "a table of rule id = option table"),
    "async_outputs": ((list, str), "a list of output port names or globs"),
    "static_inputs": ((list, str), "a list of input port names or globs"),
    "one_at_a_time": ((dict,), "a table of group name = list of signals"),
    "one_hot": ((dict,), "a table of group name = list of signals"),
    "cell_model": ((str,), '"atomic" or "sum-of-products"'),
    "accept_file": ((str,), "a path"),
    "baseline": ((str,), "a path"),
    "cache_dir": ((str,), "a path"),
    "cache_limit_mb": ((int,), "a size in MB (0: no limit)"),
    "jobs": ((int,), "a number of worker processes"),
    "scheduler": ((str,), "a Dask scheduler address, e.g. tcp://host:8786"),
    "frontend": ((str,), "auto, pyverilog or slang"),
    "format": ((str,), "a report format name (hazlint formats lists them)"),
    "prove": ((dict,), "a table of hazard-prover options"),
    "memory_as_registers_max_bits": ((int,), "a number of bits (arrays up to it are registers)"),
    "time_budget": ((int, float), "a number of seconds (0: no time limit)"),
    "limits": ((dict,), "a table of limit = number (see hazlint.limits)"),
}


@dataclass
class Config:
    """Loaded configuration; every path is absolute."""

    path: str | None = None           # the file it came from (None: defaults)
    root: str = "."                   # project root: the config file's directory, else cwd
    files: list[str] = field(default_factory=list)
    top: list[str] | None = None
    include_dirs: list[str] = field(default_factory=list)
    defines: dict[str, str] = field(default_factory=dict)
    cells: dict[str, Any] = field(default_factory=dict)
    liberty: list[str] = field(default_factory=list)
    sdf: list[str] = field(default_factory=list)
    sdf_corner: str = DELAYS.defaults()["sdf_corner"]
    select: list[str] | None = None
    ignore: list[str] = field(default_factory=list)
    severity: dict[str, str] = field(default_factory=dict)
    fail_on: str = "warning"
    rules: dict[str, dict[str, Any]] = field(default_factory=dict)
    async_outputs: list[str] = field(default_factory=list)
    static_inputs: list[str] = field(default_factory=list)
    one_at_a_time: dict[str, list[str]] = field(default_factory=dict)
    one_hot: dict[str, list[str]] = field(default_factory=dict)
    cell_model: str = "atomic"
    accept_file: str | None = None
    baseline: str | None = None
    cache_dir: str | None = None
    cache_limit_mb: int | None = None
    jobs: int | None = None
    scheduler: str | None = None
    frontend: str = "auto"
    format: str = "text"
    prove: dict[str, Any] = field(default_factory=dict)
    memory_as_registers_max_bits: int = 4096
    time_budget: float | None = None  # seconds (None: the default, 0: none)
    limits: dict[str, Any] = field(default_factory=dict)
    raw: dict[str, Any] = field(default_factory=dict)     # the table as written
    key_lines: dict[str, int] = field(default_factory=dict)   # key -> line in the file

    @property
    def include_root(self) -> str | None:
        """Where ```include`` may read: the project root when a configuration file gives one;
        None otherwise (the reader then takes each file's repository, else its folder)."""
        return self.root if self.path else None

    def where(self, key: str | None = None) -> str:
        """``path:line: `` prefix for messages about a key (empty when defaults)."""
        if not self.path:
            return ""
        line = self.key_lines.get(key or "", 0)
        return f"{self.path}:{line}: " if line else f"{self.path}: "

    def library(self, liberty: list[str] | None = None):
        """Cells from ``cells`` and ``liberty`` (the configuration's, or the files given) as a
        :class:`hazlint.netlist.library.Library`."""
        from .netlist.library import Library, cell_from_config
        lib = Library()
        liberty = self.liberty if liberty is None else liberty
        if liberty:
            try:
                from .delays.liberty import read_liberty
            except ModuleNotFoundError as exc:
                if exc.name != "hazlint.delays.liberty":
                    raise
                raise ConfigError("Liberty files are configured but Liberty reading is not "
                                  "available in this build", path=self.path,
                                  line=self.key_lines.get("liberty")) from None
            for p in liberty:
                if not os.path.exists(p):
                    raise ConfigError(f"Liberty file not found: {p}", path=self.path,
                                      line=self.key_lines.get("liberty"))
                lib = lib.merge(read_liberty(p))
        for name, spec in self.cells.items():
            if not isinstance(spec, dict):
                raise ConfigError(f"cell '{name}' must be a table", path=self.path,
                                  line=self.key_lines.get("cells"))
            lib.add(cell_from_config(name, spec, source=self.path or "config"))
        return lib


def find_config(cwd: str | os.PathLike | None = None) -> str | None:
    """The nearest hazlint.toml, or pyproject.toml with a [tool.hazlint] table, upward."""
    d = Path(cwd or os.getcwd()).resolve()
    for directory in (d, *d.parents):
        h = directory / "hazlint.toml"
        if h.is_file():
            return str(h)
        p = directory / "pyproject.toml"
        if p.is_file():
            try:
                text = p.read_text(encoding="utf-8")
            except OSError:
                continue
            if re.search(r"^\s*\[\s*tool\s*\.\s*hazlint\s*[\].]", text, re.M):
                return str(p)
    return None


def load_config(cwd: str | os.PathLike | None = None, path: str | os.PathLike | None = None
                ) -> Config:
    """Find and read the configuration (``path`` given: read that file)."""
    if path is None:
        path = find_config(cwd)
        if path is None:
            return Config(root=str(Path(cwd or os.getcwd()).resolve()))
    path = str(Path(path).resolve())
    if not os.path.isfile(path):
        raise ConfigError(f"configuration file not found: {path}")
    try:
        text = Path(path).read_text(encoding="utf-8")
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        m = re.search(r"line (\d+)", str(exc))
        raise ConfigError(f"invalid TOML: {exc}", path=path,
                          line=int(m.group(1)) if m else None) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise ConfigError(f"cannot read configuration: {exc}", path=path) from None
    is_pyproject = os.path.basename(path) == "pyproject.toml"
    if is_pyproject:
        table = data.get("tool", {}).get("hazlint", {})
        prefix = "tool.hazlint"
    else:
        table = data
        prefix = ""
    if not isinstance(table, dict):
        raise ConfigError("[tool.hazlint] must be a table", path=path)
    return config_from_table(table, path, text, prefix)


def _key_lines(text: str, prefix: str) -> dict[str, int]:
    """Line of every top-level key of our table (``key = ...`` or ``[prefix.key...]``)."""
    lines: dict[str, int] = {}
    section: str | None = "" if not prefix else None
    header = re.compile(r"^\s*\[\[?\s*([^\]]+?)\s*\]\]?")
    assign = re.compile(r'^\s*("?)([A-Za-z0-9_\-]+)\1\s*[=.]')
    for i, line in enumerate(text.splitlines(), 1):
        m = header.match(line)
        if m:
            name = re.sub(r"\s+", "", m.group(1)).replace('"', "")
            if name == prefix:
                section = ""
            elif prefix and name.startswith(prefix + "."):
                key = name[len(prefix) + 1:].split(".")[0]
                lines.setdefault(key, i)
                section = None
            elif not prefix:
                lines.setdefault(name.split(".")[0], i)
                section = None
            else:
                section = None
            continue
        if section == "":
            m = assign.match(line)
            if m:
                lines.setdefault(m.group(2), i)
    return lines


def _new_spellings(table: dict[str, Any], path: str | None, key_lines: dict[str, int]):
    """The table with old key names and rule ids in their current spelling
    (:mod:`hazlint.findings.names`; each old one met is remembered for the run's note)."""
    from .findings.names import KEY_RENAMES, deprecated, rule_id, rule_ids
    table = dict(table)
    key_lines = dict(key_lines)

    def where(key):
        line = key_lines.get(key)
        return f"{os.path.basename(path)}:{line}" if path and line else (path or "")
    for old, new in KEY_RENAMES.items():
        if old in table:
            if new in table:
                raise ConfigError(f"configuration keys '{old}' and '{new}' are the same key "
                                  f"(the old and the new name): keep '{new}'", path=path,
                                  line=key_lines.get(old), construct=old)
            deprecated(old, new, where(old))
            table[new] = table.pop(old)
            if old in key_lines:
                key_lines[new] = key_lines[old]
    for key in ("select", "ignore"):
        v = table.get(key)
        if isinstance(v, list):
            table[key] = rule_ids([x for x in v if isinstance(x, str)], where(key)) \
                if all(isinstance(x, str) for x in v) else v
        elif isinstance(v, str):
            table[key] = rule_id(v, where(key))
    for key in ("severity", "rules"):
        v = table.get(key)
        if isinstance(v, dict):
            table[key] = {rule_id(k, where(key)): x for k, x in v.items()}
    return table, key_lines


def config_from_table(table: dict[str, Any], path: str | None, text: str = "",
                      prefix: str = "") -> Config:
    root = os.path.dirname(path) if path else os.getcwd()
    key_lines = _key_lines(text, prefix) if text else {}
    table, key_lines = _new_spellings(table, path, key_lines)
    cfg = Config(path=path, root=root, raw=dict(table), key_lines=key_lines)
    for key, value in table.items():
        if key not in KEYS:
            raise ConfigError(f"unknown configuration key '{key}' (known keys: "
                              f"{', '.join(sorted(KEYS))})", path=path,
                              line=key_lines.get(key), construct=key)
        types, what = KEYS[key]
        if not isinstance(value, types) or (isinstance(value, bool) and bool not in types):
            raise ConfigError(f"configuration key '{key}' must be {what}, got {value!r}",
                              path=path, line=key_lines.get(key), construct=key)

    def err(key, msg):
        return ConfigError(msg, path=path, line=key_lines.get(key), construct=key)

    def strs(key) -> list[str]:
        v = table.get(key, [])
        v = [v] if isinstance(v, str) else v
        if not all(isinstance(x, str) for x in v):
            raise err(key, f"configuration key '{key}' must list strings")
        return list(v)

    def abspath(p: str) -> str:
        return os.path.normpath(os.path.join(root, os.path.expanduser(p)))

    files: list[str] = []
    for pat in strs("files"):
        full = abspath(pat)
        if glob.has_magic(full):
            hits = sorted(glob.glob(full, recursive=True))
            if not hits:
                raise err("files", f"configured files '{pat}' match nothing")
            files.extend(hits)
        else:
            files.append(full)
    cfg.files = files
    if "top" in table:
        cfg.top = strs("top")
    cfg.include_dirs = [abspath(p) for p in strs("include_dirs")]
    defs = table.get("defines", {})
    if isinstance(defs, list):
        d2 = {}
        for item in defs:
            if not isinstance(item, str):
                raise err("defines", "defines must be NAME or NAME=VALUE strings")
            k, _, v = item.partition("=")
            d2[k.strip()] = v.strip()
        defs = d2
    cfg.defines = {str(k): ("" if v is True else str(v)) for k, v in defs.items()}
    cfg.cells = dict(table.get("cells", {}))
    cfg.liberty = [abspath(p) for p in strs("liberty")]
    cfg.sdf = [abspath(p) for p in strs("sdf")]
    if "select" in table:
        cfg.select = strs("select")
    cfg.ignore = strs("ignore")
    sev = table.get("severity", {})
    for rid, level in sev.items():
        if not isinstance(level, str):
            raise err("severity", f"severity of '{rid}' must be error, warning or info")
        try:
            Severity.parse(level)
        except ValueError as exc:
            raise err("severity", f"severity of '{rid}': {exc}") from None
    cfg.severity = dict(sev)
    for opt in RUN.options:        # scalar keys: type, values and bounds as declared
        if opt.name in table:
            try:
                setattr(cfg, opt.name, opt.coerce(table[opt.name], label=opt.name))
            except ConfigError as exc:
                raise err(opt.name, exc.message) from None
    rules = table.get("rules", {})
    for rid, opts in rules.items():
        if not isinstance(opts, dict):
            raise err("rules", f"rules.{rid} must be a table of options")
    cfg.rules = {k: dict(v) for k, v in rules.items()}
    cfg.async_outputs = strs("async_outputs")
    cfg.static_inputs = strs("static_inputs")
    for key in ("one_at_a_time", "one_hot"):
        groups = {}
        for name, sigs in table.get(key, {}).items():
            sigs = [sigs] if isinstance(sigs, str) else sigs
            if not isinstance(sigs, list) or not sigs or \
                    not all(isinstance(x, str) for x in sigs):
                raise err(key, f"{key}.{name} must be a list of signal names")
            groups[str(name)] = list(sigs)
        setattr(cfg, key, groups)
    if "cell_model" in table:
        from .analysis.cellmodel import CELL_MODELS
        if table["cell_model"] not in CELL_MODELS:
            raise err("cell_model", f"cell_model must be one of {', '.join(CELL_MODELS)}, "
                      f"got {table['cell_model']!r}")
        cfg.cell_model = table["cell_model"]
    for key in ("accept_file", "baseline", "cache_dir"):
        if key in table:
            setattr(cfg, key, abspath(table[key]))
    if "scheduler" in table:
        if not table["scheduler"].strip():
            raise err("scheduler", "scheduler must be an address such as tcp://host:8786")
        cfg.scheduler = table["scheduler"].strip()
    if "frontend" in table:
        from .frontends.registry import check_choice
        try:
            check_choice(table["frontend"])
        except ConfigError as exc:
            raise err("frontend", exc.message) from None
        cfg.frontend = table["frontend"]
    if "format" in table:
        from .report.registry import FormatNames
        if table["format"] not in FormatNames():
            raise err("format", f"unknown output format {table['format']!r} (known: "
                                f"{', '.join(FormatNames())})")
        cfg.format = table["format"]
    if "limits" in table:
        from .limits import DEFAULT as LIMIT_DEFAULTS
        LIMIT_DEFAULTS.with_values(table["limits"], path=path, line=key_lines.get("limits"))
        cfg.limits = dict(table["limits"])
    try:
        cfg.prove = PROVE.check(table.get("prove", {}))
    except ConfigError as exc:
        raise err("prove", exc.message) from None
    return cfg
