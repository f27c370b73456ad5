"""One run request: what a run is, decided once from the command line (or a library call) and
the configuration, before anything is read.

:func:`resolve` is the one place that turns arguments and a :class:`~hazlint.config.Config`
into a :class:`RunRequest`: the files (checked to exist), the rules and their resolved
options, the prover's options, the design inputs (the ingredients of the design key), the
delays, the caches, workers and bounds. Every later stage reads the request; none changes it
nor the configuration it was made from. The keys of the run's caches are computed once per
request (:attr:`RunRequest.design_key`, :attr:`RunRequest.result_key`).

    >>> from hazlint.config import Config
    >>> r = resolve(["fixtures/demo/press_top.v"], config=Config(root="."), prove=False)
    ... # doctest: +SKIP
    >>> r.design.paths, r.prove                        # doctest: +SKIP
"""
from __future__ import annotations

import functools
import os
from dataclasses import dataclass, fields
from typing import Any, Iterable, Mapping, Sequence

from .config import Config, load_config
from .errors import ConfigError, HazlintError
from .findings.names import rule_id, rule_ids
from .options import PROVE
from .paths import relpath
from .plugins import PSEUDO_RULES, Rule, all_rules, select_rules


def norm(p: str) -> str:
    """A path as the changed-files filter compares it (absolute, case-folded where the file
    system folds case)."""
    return os.path.normcase(os.path.abspath(p))


@dataclass(frozen=True)
class DesignInputs:
    """Everything reading, elaborating and annotating the design depends on; the fields are
    the ingredients of :func:`hazlint.store.design.design_key` (called with them as keywords,
    so the two cannot drift apart)."""

    paths: tuple[str, ...]
    texts: Mapping[str, str] | None         # absolute path -> unsaved editor text
    top: Any                                # None, a module name, or a list of them
    include_dirs: tuple[str, ...]
    defines: Mapping[str, str]
    root: str | None                        # where `include may read (None: per file)
    cells: Mapping[str, Any]
    cells_source: str | None
    liberty: tuple[str, ...]
    sdf: tuple[str, ...]
    sdf_corner: str
    memory_max_bits: int
    frontend: str

    def key_fields(self) -> dict[str, Any]:
        return {f.name: getattr(self, f.name) for f in fields(self)}


@dataclass(frozen=True, eq=False)
class RunRequest:
    """A run, resolved once (see :func:`resolve`). Frozen: stages read it, never change it."""

    config: Config                          # as read from the file; never changed
    cwd: str
    root: str                               # paths in reports are relative to it
    design: DesignInputs
    select: tuple[str, ...] | None
    ignore: tuple[str, ...]
    rules: tuple[Rule, ...]                 # the rules that run
    rule_options: Mapping[str, Mapping[str, Any]]   # rule id -> resolved options (every rule)
    known_ids: frozenset
    prove: bool
    prove_options: Mapping[str, Any]        # as given (configuration, then command line)
    changed: frozenset | None               # normalised paths (:func:`norm`); None: no filter
    baseline: str | None
    baseline_given: bool                    # named by the call, not the configuration
    use_cache: bool
    cache_dir: str | None
    jobs: int | None
    scheduler: str | None
    time_budget: float | None
    limits: Mapping[str, Any]               # command-line size limits over the configuration's

    @property
    def files(self) -> list[str]:
        return list(self.design.paths)

    @property
    def cache_limit_mb(self) -> int | None:
        return self.config.cache_limit_mb

    def library(self):
        """The cell library: configured cells and the request's Liberty files."""
        return self.config.library(list(self.design.liberty))

    @functools.cached_property
    def design_key(self) -> str | None:
        """The design cache's key (None: some input cannot be read; the load reports it)."""
        from .store.design import design_key
        return design_key(**self.design.key_fields())

    @functools.cached_property
    def result_key(self) -> str | None:
        """The result cache's key: the design key and what decides the findings."""
        if self.design_key is None:
            return None
        from .store.result import result_key
        return result_key(self.design_key, self.config, select=self.select,
                          ignore=self.ignore, prove=self.prove, options=self.rule_options,
                          rules=self.rules, prove_options=self.prove_options)


def resolve(files: Sequence[str] | None = None, *, config: Config | None = None,
            cwd: str | None = None, texts: Mapping[str, str] | None = None,
            changed: Iterable[str] | None = None, select: Iterable[str] | None = None,
            ignore: Iterable[str] = (), prove: bool = True, top=None,
            include_dirs: Sequence[str] | None = None, defines: Mapping[str, str] | None = None,
            liberty: Sequence[str] = (), baseline: str | None = None,
            rule_options: Mapping[str, Mapping[str, Any]] | None = None,
            prove_options: Mapping[str, Any] | None = None, use_cache: bool = True,
            cache_dir: str | None = None, jobs: int | None = None,
            scheduler: str | None = None, frontend: str | None = None,
            time_budget: float | None = None,
            limits: Mapping[str, Any] | None = None) -> RunRequest:
    """The run request of a call. ``files`` default to the configured ones; ``texts``
    (path -> text) overrides file contents; ``changed`` keeps only findings located in those
    files or whose evidence runs through them; ``select``/``ignore`` add to the
    configuration's; ``include_dirs`` replace the configured ones, ``defines`` and
    ``rule_options``/``prove_options`` go over the configured ones, ``liberty`` adds files;
    ``cache_dir``, ``jobs``, ``scheduler``, ``frontend`` and ``time_budget`` (seconds; 0: none)
    override the configuration; ``limits`` (name -> value) go over its size limits."""
    cwd = os.path.abspath(cwd or os.getcwd())
    if config is None:
        config = load_config(cwd)
    root = config.root if config.path else cwd
    if files:
        paths = [p if os.path.isabs(p) else os.path.join(cwd, p) for p in files]
    else:
        paths = list(config.files)
    if not paths:
        raise HazlintError("no Verilog files given and none configured (configuration key "
                           "'files')")
    for p in paths:
        if not os.path.isfile(p) and not (texts and any(norm(k) == norm(p) for k in texts)):
            if os.path.isdir(p):
                raise HazlintError("is a directory, not a Verilog file", path=p)
            raise HazlintError(f"file not found: {relpath(p, cwd)}", path=p)
    sel = rule_ids(select, "--select") if select is not None else config.select
    ign = list(config.ignore) + rule_ids(ignore, "--ignore")
    rules = select_rules(sel, ign)
    options, known_ids = _rule_options(config, rule_options)
    prove_opts = dict(config.prove, **PROVE.check(prove_options))
    if frontend is not None:
        from .frontends.registry import check_choice
        check_choice(frontend)
    chosen_top = top if top is not None else config.top
    if isinstance(chosen_top, list) and len(chosen_top) == 1:
        chosen_top = chosen_top[0]
    design = DesignInputs(
        paths=tuple(paths),
        texts={os.path.abspath(k): v for k, v in texts.items()} if texts else None,
        top=chosen_top,
        include_dirs=tuple(include_dirs if include_dirs is not None else config.include_dirs),
        defines=dict(config.defines, **(defines or {})),
        root=config.include_root, cells=config.cells, cells_source=config.path,
        liberty=tuple(list(config.liberty) + [os.path.abspath(p) for p in liberty]),
        sdf=tuple(config.sdf), sdf_corner=config.sdf_corner,
        memory_max_bits=config.memory_as_registers_max_bits,
        frontend=frontend or config.frontend)
    return RunRequest(
        config=config, cwd=cwd, root=root, design=design,
        select=None if sel is None else tuple(sel), ignore=tuple(ign), rules=tuple(rules),
        rule_options=options, known_ids=frozenset(known_ids), prove=bool(prove),
        prove_options=prove_opts,
        changed=None if changed is None else frozenset(
            norm(p if os.path.isabs(p) else os.path.join(cwd, p)) for p in changed),
        baseline=baseline or config.baseline, baseline_given=bool(baseline),
        use_cache=bool(use_cache),
        cache_dir=os.path.abspath(cache_dir) if cache_dir else config.cache_dir,
        jobs=jobs if jobs is not None else config.jobs,
        scheduler=scheduler or config.scheduler,
        time_budget=time_budget, limits=dict(limits or {}))


def _rule_options(config: Config, extra) -> tuple[dict[str, dict[str, Any]], set[str]]:
    """Every rule's options: defaults, the configuration's ``[rules.ID]`` tables, then the
    call's; options for unknown rules and severities of unknown rules are errors."""
    given = dict(config.rules)
    for k, v in (extra or {}).items():
        k = rule_id(k)
        given[k] = dict(given.get(k, {}), **v)
    rules = all_rules()
    known_ids = {r.id for r in rules}
    for rid in given:
        if rid not in known_ids:
            raise ConfigError(f"options given for unknown rule '{rid}'", path=config.path,
                              line=config.key_lines.get("rules"))
    options = {r.id: r.resolve_options(given.get(r.id), config.where("rules")) for r in rules}
    for rid in config.severity:
        if rid not in known_ids and rid not in PSEUDO_RULES:
            raise ConfigError(f"severity given for unknown rule '{rid}'", path=config.path,
                              line=config.key_lines.get("severity"))
    return options, known_ids
