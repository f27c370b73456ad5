"""The lint pipeline as a function: what the command line, the language server and the
pre-commit hook all call.

    >>> from hazlint.api import lint
    >>> result = lint(["fixtures/demo/press_top.v"])          # doctest: +SKIP
    >>> [(d.rule, d.line) for d in result.diagnostics]        # doctest: +SKIP

Stages: configuration -> load (read, elaborate, SDF) -> rules (shared :class:`AnalysisContext`)
-> hazard prover refinement (when available) -> waivers -> baseline -> ``changed`` filter.
"""
from __future__ import annotations

import importlib
import importlib.util
import inspect
import os
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, Iterable, Mapping, Sequence

from . import budget
from .config import Config, load_config
from .diagnostics import Diagnostic, Severity, sort_diagnostics
from .errors import EXIT_CLEAN, EXIT_FINDINGS, ConfigError, HazlintError
from .plugins import PSEUDO_RULES, Rule, all_rules, select_rules
from .findings.names import RECONVERGENCE_RULE, rule_id, rule_ids
from .paths import relpath
from .waivers import UNUSED_RULE, apply_waivers, read_waiver_file, scan_sources

if TYPE_CHECKING:       # imported where used: a cached report needs neither it nor networkx
    from .analysis.context import AnalysisContext


@dataclass
class LintResult:
    diagnostics: list[Diagnostic]          # after waivers and baseline; sorted
    waived: list[Diagnostic]               # each with ``waived`` set to the reason
    design: Any
    config: Config
    root: str                              # project root: config file's directory, else cwd
    counts: dict[str, int]
    rules: dict[str, Rule] = field(default_factory=dict)     # the rules that ran
    baselined: list[Diagnostic] = field(default_factory=list)
    files: list[str] = field(default_factory=list)
    context: Any = None
    incomplete: bool = False               # the time budget cut some analysis short

    def relpath(self, path: str) -> str:
        # a report asks for the same few source paths once per evidence hop (millions of times
        # on a large netlist), so each answer is kept; the cwd does not change during a run
        memo = self.__dict__.setdefault("_relpaths", {})
        rel = memo.get(path)
        if rel is None:
            rel = memo[path] = relpath(path, self.root)
        return rel

    def exit_code(self, fail_on: str | None = None) -> int:
        level = fail_on or self.config.fail_on
        if level == "never":
            return EXIT_CLEAN
        threshold = Severity.parse(level)
        return EXIT_FINDINGS if any(d.severity >= threshold for d in self.diagnostics) \
            else EXIT_CLEAN


# front-end notes that say part of the design was not analysed
_COVERAGE_KINDS = frozenset(("not-analysed", "file-not-read"))


def _norm(p: str) -> str:
    return os.path.normcase(os.path.abspath(p))


def load(files: Sequence[str], config: Config, *, texts: Mapping[str, str] | None = None,
         top=None, include_dirs=None, defines=None, use_cache: bool = True, progress=None,
         cache_info: dict | None = None):
    """Read and elaborate the design with the configured library, then apply SDF.

    With the cache on, an unchanged design comes from the design cache
    (:mod:`hazlint.store.design`) without reading or elaborating anything; ``cache_info``
    (a dict, optional) receives the ``design_key`` used."""
    # the reader and the flattener (pyverilog and its parser tables) are imported only when
    # the design has to be built: a warm run from the design cache does not need them
    include_dirs, defines, chosen_top = _load_inputs(config, top, include_dirs, defines)
    abs_texts = {os.path.abspath(k): v for k, v in texts.items()} if texts else None

    def load_fresh():
        from .elaborate import elaborate
        from .frontends.registry import read_sources
        from .gcpause import collector_paused
        kwargs: dict[str, Any] = {"include_dirs": include_dirs, "defines": defines,
                                  "frontend": config.frontend}
        params = inspect.signature(read_sources).parameters
        optional = {"root": config.include_root, "jobs": config.jobs}
        for k, v in optional.items():
            if k in params and v is not None:
                kwargs[k] = v
        if "cache" in params and use_cache:
            from .store.parse import open_cache
            kwargs["cache"] = open_cache(config.cache_dir, limit_mb=config.cache_limit_mb)
        if "tables" in params:
            kwargs["tables"] = _table_cache(config) if use_cache else False
        if progress is not None and "progress" in params:
            kwargs["progress"] = progress
        if abs_texts:
            if "texts" not in params:
                raise HazlintError("this build cannot lint unsaved editor text (the reader "
                                   "takes no 'texts')")
            kwargs["texts"] = abs_texts
        library = config.library()
        with collector_paused():
            sources = read_sources(list(files), tolerant=True, **kwargs)
            design = elaborate(sources, top=chosen_top, library=library,
                               memory_max_bits=config.memory_as_registers_max_bits)
        _apply_sdf(design, config, library)
        return design, sources

    if not use_cache:
        return load_fresh()[0]
    from .store.design import load_cached, open_design_cache
    return load_cached(list(files), config, texts=abs_texts, top=chosen_top,
                       include_dirs=include_dirs, defines=defines, root=config.include_root,
                       load_fresh=load_fresh, cache=open_design_cache(config.cache_dir,
                                               limit_mb=config.cache_limit_mb),
                       info=cache_info)


def _table_cache(config: Config):
    """Where the parser keeps its tables: the run's cache folder, or nowhere (False) when
    that folder may not be used."""
    from . import __version__
    from .store.parse import open_cache
    return open_cache(config.cache_dir, namespace="parser", limit_mb=config.cache_limit_mb,
                      version=f"{__version__}+tables") or False


def _apply_sdf(design, config: Config, library) -> None:
    if config.sdf:
        try:
            sdf = importlib.import_module("hazlint.delays.sdf")
        except ModuleNotFoundError:
            sdf = None
        annotate = getattr(sdf, "annotate", None)
        if annotate is None:
            raise ConfigError("SDF files are configured but SDF annotation is not available",
                              path=config.path, line=config.key_lines.get("sdf"))
        for p in config.sdf:
            if not os.path.exists(p):
                raise ConfigError(f"SDF file not found: {p}", path=config.path,
                                  line=config.key_lines.get("sdf"))
            annotate(design, p, corner="minmax", library=library)


def run_rules(design, rules: Sequence[Rule], context: "AnalysisContext",
              severity: Mapping[str, str] | None = None) -> list[Diagnostic]:
    """Run each rule once over the shared context; apply per-rule severity overrides (to the
    findings at the rule's default severity: levels a rule sets through its own options stay)."""
    out: list[Diagnostic] = []
    for rule in rules:
        if budget.expired():
            out.append(_not_run(design, rule))
            continue
        override = (severity or {}).get(rule.id)
        level = Severity.parse(override) if override else None
        try:
            found = list(rule.check(design, context))
        except HazlintError:
            raise
        except Exception as exc:
            raise HazlintError(f"rule '{rule.id}' failed: {type(exc).__name__}: {exc}") from exc
        for d in found:
            if level is not None and d.severity == rule.severity:
                d = d.with_severity(level)
            out.append(d)
    return out


def _not_run(design, rule: Rule) -> Diagnostic:
    """The finding that says a rule did not run because the time budget was used up."""
    from .diagnostics import Location
    files = list(getattr(design, "files", None) or [])
    return Diagnostic(
        rule=rule.id, kind="analysis-incomplete", severity=Severity.WARNING,
        location=Location(files[0] if files else "", 1, 1), instance=getattr(design, "top", ""),
        message=f"rule '{rule.id}' did not run: {budget.reason()}",
        evidence={"reason": budget.reason(), "key": f"not-run:{rule.id}"},
        fix="raise the time budget (--time-budget SECONDS, or time_budget in the "
            "configuration; 0: none), or lint a smaller part of the design")


def refine(design, diagnostics: list[Diagnostic], context, options: Mapping[str, Any]):
    """Hand the findings to the hazard prover when it is part of this build."""
    if importlib.util.find_spec("hazlint.analysis.refine") is None:
        return diagnostics
    prove = importlib.import_module("hazlint.analysis.refine")
    return list(prove.refine(design, diagnostics, context, dict(options)))


def _unlisted(context, rules, opts) -> dict:
    """Plain sinks with reconvergent fanout that the reconvergence rule's scope leaves out
    (:mod:`hazlint.findings.scope`); empty when the rule did not run or lists them."""
    from .findings.scope import unlisted
    rid = RECONVERGENCE_RULE
    if rid not in {r.id for r in rules} or budget.expired():
        return {}
    scope = (opts.get(rid) or {}).get("scope")
    u = unlisted(context)
    if scope == "outputs":
        u = type(u)(0, u.data_pins)
    elif scope != "async":
        return {}
    return u.to_json() if u else {}


def _touches(d: Diagnostic, changed: set[str]) -> bool:
    if d.location.path and _norm(d.location.path) in changed:
        return True
    for flow in d.flows:
        for h in flow:
            if h.location is not None and h.location.path and _norm(h.location.path) in changed:
                return True
    return False


@dataclass
class _Plan:
    """What a run is, decided before anything is read: files, root, rules and their options."""
    config: Config
    cwd: str
    root: str
    paths: list[str]
    select: list[str] | None
    ignore: list[str]
    rules: list[Rule]
    options: dict[str, Any]
    known_ids: set[str]


def _plan(files, *, config, cwd, texts, select, ignore, rule_options) -> _Plan:
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
        if not os.path.isfile(p) and not (texts and any(_norm(k) == _norm(p) for k in texts)):
            if os.path.isdir(p):
                raise HazlintError("is a directory, not a Verilog file", path=p)
            raise HazlintError(f"file not found: {relpath(p, cwd)}", path=p)
    sel = rule_ids(select, "--select") if select is not None else config.select
    ign = list(config.ignore) + rule_ids(ignore, "--ignore")
    rules = select_rules(sel, ign)
    opts = {}
    given = dict(config.rules)
    for k, v in (rule_options or {}).items():
        k = rule_id(k)
        given[k] = dict(given.get(k, {}), **v)
    known_ids = {r.id for r in all_rules()}
    for rid in given:
        if rid not in known_ids:
            raise ConfigError(f"options given for unknown rule '{rid}'", path=config.path,
                              line=config.key_lines.get("rules"))
    for r in all_rules():
        opts[r.id] = r.resolve_options(given.get(r.id), config.where("rules"))
    for rid in config.severity:
        if rid not in known_ids and rid not in PSEUDO_RULES:
            raise ConfigError(f"severity given for unknown rule '{rid}'", path=config.path,
                              line=config.key_lines.get("severity"))
    return _Plan(config=config, cwd=cwd, root=root, paths=paths, select=sel, ignore=ign,
                 rules=rules, options=opts, known_ids=known_ids)


def report_key(files: Sequence[str] | None = None, *, config: Config | None = None,
               cwd: str | None = None, changed: Iterable[str] | None = None,
               select: Iterable[str] | None = None, ignore: Iterable[str] = (),
               prove: bool = True, top=None, include_dirs: Sequence[str] | None = None,
               defines: Mapping[str, str] | None = None, baseline: str | None = None,
               rule_options: Mapping[str, Mapping[str, Any]] | None = None,
               render: Mapping[str, Any] | None = None) -> str | None:
    """sha256 over everything a finished report depends on, computed without reading the
    design: the findings' key (:func:`~hazlint.store.result.result_key` over the design key),
    the waiver file's and the baseline's contents, the changed-files filter, the project root
    and the working directory (paths in reports are relative), and ``render`` (format and
    renderer options). Files pulled in through ``include`` are not in the key: the report
    cache checks them as dependencies of the entry. None when some input cannot be read (the
    run then goes the normal way and reports the problem)."""
    import hashlib
    import json
    from .store.files import digest_file
    from .store.design import design_key
    from .store.result import result_key
    plan = _plan(files, config=config, cwd=cwd, texts=None, select=select, ignore=ignore,
                 rule_options=rule_options)
    config = plan.config
    incs, defs, chosen_top = _load_inputs(config, top, include_dirs, defines)
    dkey = design_key(plan.paths, texts=None, top=chosen_top, include_dirs=incs, defines=defs,
                      root=config.include_root, cells=config.cells, cells_source=config.path,
                      liberty=config.liberty, sdf=config.sdf, sdf_corner="minmax",
                      memory_max_bits=config.memory_as_registers_max_bits,
                      frontend=config.frontend)
    if dkey is None:
        return None
    rkey = result_key(dkey, config, select=plan.select, ignore=plan.ignore, prove=prove,
                      options=plan.options, rules=plan.rules)
    if rkey is None:
        return None
    digests = {}
    for tag, p in (("waivers", config.accept_file), ("baseline", baseline or config.baseline)):
        if p:
            digests[tag] = [os.path.abspath(p), digest_file(p) if os.path.exists(p) else None]
    material = {
        "result": rkey, "inputs": digests, "cwd": plan.cwd, "root": plan.root,
        "baseline_given": bool(baseline),
        "changed": None if changed is None else sorted(
            {_norm(p if os.path.isabs(p) else os.path.join(plan.cwd, p)) for p in changed}),
        "render": dict(render or {}),
    }
    try:
        text = json.dumps(material, sort_keys=True, default=repr)
    except (TypeError, ValueError):
        return None
    return hashlib.sha256(text.encode("utf-8", "surrogateescape")).hexdigest()


def _load_inputs(config: Config, top, include_dirs, defines):
    """The include directories, macros and top module(s) a load uses: the call's, else the
    configuration's."""
    include_dirs = list(include_dirs if include_dirs is not None else config.include_dirs)
    defines = dict(config.defines, **(defines or {}))
    chosen_top = top if top is not None else config.top
    if isinstance(chosen_top, list) and len(chosen_top) == 1:
        chosen_top = chosen_top[0]
    return include_dirs, defines, chosen_top


def lint(files: Sequence[str] | None = None, *, config: Config | None = None,
         cwd: str | None = None, texts: Mapping[str, str] | None = None,
         changed: Iterable[str] | None = None, select: Iterable[str] | None = None,
         ignore: Iterable[str] = (), prove: bool = True, top=None,
         include_dirs: Sequence[str] | None = None, defines: Mapping[str, str] | None = None,
         baseline: str | None = None, rule_options: Mapping[str, Mapping[str, Any]] | None = None,
         use_cache: bool = True, progress=None, time_budget: float | None = None,
         limits: Mapping[str, Any] | None = None) -> LintResult:
    """Lint a design. ``files`` default to the configured ones; ``texts`` (path -> text)
    overrides file contents; ``changed`` keeps only findings located in those files or whose
    evidence runs through them; ``select``/``ignore`` add to the configuration's.
    ``time_budget`` (seconds; default: the configuration's, else
    :data:`hazlint.budget.DEFAULT_SECONDS`; 0: none) and ``limits`` (name -> value, over the
    configuration's) bound the run (:mod:`hazlint.budget`, :mod:`hazlint.limits`)."""
    plan = _plan(files, config=config, cwd=cwd, texts=texts, select=select, ignore=ignore,
                 rule_options=rule_options)
    from .analysis.workers import configured
    from .budget import bounded
    with bounded(plan.config, time_budget, limits), \
            configured(plan.config.jobs, plan.config.scheduler):
        return _lint_planned(plan, texts=texts, changed=changed, prove=prove, top=top,
                             include_dirs=include_dirs, defines=defines, baseline=baseline,
                             use_cache=use_cache, progress=progress)


def _lint_planned(plan: _Plan, *, texts, changed, prove, top, include_dirs, defines, baseline,
                  use_cache, progress) -> LintResult:
    config, cwd, root, paths = plan.config, plan.cwd, plan.root, plan.paths
    sel, ign, rules, opts, known_ids = plan.select, plan.ignore, plan.rules, plan.options, \
        plan.known_ids
    cache_info: dict = {}
    design = load(paths, config, texts=texts, top=top, include_dirs=include_dirs,
                  defines=defines, use_cache=use_cache, progress=progress,
                  cache_info=cache_info)

    if config.cell_model != "atomic":
        from .analysis.cellmodel import decompose_design
        design = decompose_design(design)
    from .analysis.context import AnalysisContext
    context = AnalysisContext(design, config, opts)
    context.change_model        # checks the change-model declarations (exit 2 on bad names)

    # findings before waivers/baseline come from the result cache when nothing they depend
    # on changed (design key, configuration, rules); waivers and the rest are redone below
    rcache = rkey = None
    if use_cache and cache_info.get("design_key"):
        from .store.result import open_result_cache, result_key
        rcache = open_result_cache(config.cache_dir, limit_mb=config.cache_limit_mb)
        if rcache is not None:
            rkey = result_key(cache_info["design_key"], config, select=sel, ignore=ign,
                              prove=prove, options=opts, rules=rules)
    diags = rcache.load(rkey) if rkey else None
    if diags is None:
        diags = run_rules(design, rules, context, config.severity)
        if prove:
            diags = refine(design, diags, context, config.prove)
        # front-end notes ride along unless their rule id is ignored or a selection leaves
        # it out
        # (what the analysis left out is always reported: a selection of rules does not
        # make a partly analysed design look clean)
        diags = list(diags) + [n for n in (design.notes or []) if isinstance(n, Diagnostic)
                               and n.rule not in ign and (sel is None or n.rule in sel
                                                          or n.kind in _COVERAGE_KINDS)]
        from .findings.fold import fold
        diags = fold(diags, context.sensitive_sinks, context.describe)
        if rkey and not texts and not budget.hit():
            rcache.store(rkey, diags)     # findings cut short by the clock are not kept

    # waivers: inline comments in every source read, plus the waiver file
    sources = list(dict.fromkeys(list(getattr(design, "files", []) or []) + paths
                                 + list(getattr(design, "includes", []) or [])))
    waivers = scan_sources(sources, texts)
    if config.accept_file:
        waivers += read_waiver_file(config.accept_file)
    ran = {r.id for r in rules} | {d.rule for d in diags}
    kept, waived, problems = apply_waivers(diags, waivers, ran, known_ids | set(PSEUDO_RULES))
    if UNUSED_RULE not in ign:
        level = config.severity.get(UNUSED_RULE)
        kept += [p.with_severity(Severity.parse(level)) if level else p for p in problems]

    baselined: list[Diagnostic] = []
    bpath = baseline or config.baseline
    if bpath:
        from .baseline import load_baseline
        if os.path.exists(bpath) or baseline:
            kept, baselined = load_baseline(bpath).split(kept)

    if changed is not None:
        ch = {_norm(p if os.path.isabs(p) else os.path.join(cwd, p)) for p in changed}
        kept = [d for d in kept if _touches(d, ch) or d.kind in _COVERAGE_KINDS]
        waived = [d for d in waived if _touches(d, ch)]
        baselined = [d for d in baselined if _touches(d, ch)]

    kept = sort_diagnostics(kept)
    waived = sort_diagnostics(waived)
    counts = {str(s): sum(1 for d in kept if d.severity == s) for s in Severity}
    counts.update(total=len(kept), waived=len(waived), baselined=len(baselined))
    counts["unlisted"] = _unlisted(context, rules, opts)
    return LintResult(diagnostics=kept, waived=waived, design=design, config=config, root=root,
                      counts=counts, rules={r.id: r for r in rules}, baselined=baselined,
                      files=paths, context=context, incomplete=budget.hit())
