"""The run: the only module that composes the stages, and the only one that consults the
run's caches (parse tables, designs, findings, finished reports).

    request (hazlint.request.resolve: command line + configuration, resolved once)
      -> load       front end (files -> IR), elaboration (IR -> Design), SDF; design cache
      -> rules      each rule once over the shared AnalysisContext          } result cache
      -> prove      the hazard prover refines the findings                  }
      -> fold       one finding per problem                                 }
      -> accept     inline acceptances and the accept file, then the baseline, then the
                    changed-files filter
      -> report     (hazlint.report.*; a finished report is kept by :class:`ReportSlot`)

    >>> from hazlint.pipeline import lint, resolve
    >>> result = lint(resolve(["fixtures/demo/press_top.v"]))   # doctest: +SKIP
    >>> [(d.rule, d.line) for d in result.diagnostics]        # doctest: +SKIP

The plan, the design key and the result key of a run are computed once, on its
:class:`~hazlint.request.RunRequest`; :mod:`hazlint.api` keeps the keyword-argument functions
of earlier versions as wrappers that build a request.
"""
from __future__ import annotations

import contextlib
import os
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, Mapping, Sequence

from . import budget
from .config import Config
from .diagnostics import Diagnostic, Severity, sort_diagnostics
from .errors import EXIT_CLEAN, EXIT_FINDINGS, ConfigError, HazlintError
from .findings.names import RECONVERGENCE_RULE
from .paths import relpath
from .plugins import PSEUDO_RULES, Rule
from .request import RunRequest, norm, resolve
from .waivers import UNUSED_RULE, apply_waivers, read_waiver_file, scan_sources

__all__ = ["LintResult", "ReportSlot", "RunRequest", "bounds", "exit_code", "lint", "load",
           "report_key", "resolve", "run_rules"]

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
        return exit_code(max((d.severity for d in self.diagnostics), default=None),
                         fail_on or self.config.fail_on)


def exit_code(worst, level: str) -> int:
    """0 or 1 from the worst severity found (None: nothing) and the failing level."""
    if level == "never" or worst is None:
        return EXIT_CLEAN
    return EXIT_FINDINGS if worst >= Severity.parse(level) else EXIT_CLEAN


# front-end notes that say part of the design was not analysed
_COVERAGE_KINDS = frozenset(("not-analysed", "file-not-read"))


@contextlib.contextmanager
def bounds(request: RunRequest):
    """The run's time budget, size limits and worker settings around a ``with`` block."""
    from .analysis.workers import configured
    with budget.bounded(request.config, request.time_budget, request.limits), \
            configured(request.jobs, request.scheduler):
        yield


# ---------------------------------------------------------------------------------------------
# load

def load(request: RunRequest, progress=None):
    """Read and elaborate the request's design with its cell library, then apply SDF. With
    the cache on, an unchanged design comes from the design cache (:mod:`hazlint.store.design`)
    without reading or elaborating anything; a design read from unsaved editor text is not
    stored (each keystroke would leave an entry behind)."""
    inputs = request.design
    cache = None
    if request.use_cache:
        from .store.design import open_design_cache
        cache = open_design_cache(request.cache_dir, limit_mb=request.cache_limit_mb)
    key = request.design_key if cache is not None else None
    if key is not None:
        design = cache.load(key, inputs.texts)
        if design is not None:
            return design
    design, sources = _load_fresh(request, progress)
    if key is not None and not inputs.texts:
        cache.store(key, design, [p for sf in sources for p in getattr(sf, "includes", ())])
    return design


def _load_fresh(request: RunRequest, progress):
    # the reader and the elaborator (pyverilog and its parser tables) are imported only when
    # the design has to be built: a warm run from the design cache does not need them
    from .elaborate import elaborate
    from .frontends.registry import read_sources
    from .gcpause import collector_paused
    inputs = request.design
    kwargs: dict[str, Any] = {}
    if request.jobs is not None:
        kwargs["jobs"] = request.jobs
    if inputs.root is not None:
        kwargs["root"] = inputs.root
    if request.use_cache:
        from .store.parse import open_cache
        kwargs["cache"] = open_cache(request.cache_dir, limit_mb=request.cache_limit_mb)
    kwargs["tables"] = _table_cache(request) if request.use_cache else False
    library = request.library()
    with collector_paused():        # millions of small acyclic objects: no collector passes
        sources = read_sources(list(inputs.paths), include_dirs=list(inputs.include_dirs),
                               defines=dict(inputs.defines), frontend=inputs.frontend,
                               texts=inputs.texts, progress=progress, tolerant=True, **kwargs)
        design = elaborate(sources, top=inputs.top, library=library,
                           memory_max_bits=inputs.memory_max_bits)
    _apply_sdf(design, request, library)
    return design, sources


def _table_cache(request: RunRequest):
    """Where the parser keeps its tables: the run's cache folder, or nowhere (False) when
    that folder may not be used."""
    from . import __version__
    from .store.parse import open_cache
    return open_cache(request.cache_dir, namespace="parser", limit_mb=request.cache_limit_mb,
                      version=f"{__version__}+tables") or False


def _apply_sdf(design, request: RunRequest, library) -> None:
    config = request.config
    if not request.design.sdf:
        return
    from .delays.sdf import annotate
    for p in request.design.sdf:
        if not os.path.exists(p):
            raise ConfigError(f"SDF file not found: {p}", path=config.path,
                              line=config.key_lines.get("sdf"))
        annotate(design, p, corner=request.design.sdf_corner, library=library)


# ---------------------------------------------------------------------------------------------
# rules, prover, fold

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
    from .findings.evidence import NotRunEvidence
    files = list(getattr(design, "files", None) or [])
    return Diagnostic(
        rule=rule.id, kind="analysis-incomplete", severity=Severity.WARNING,
        location=Location(files[0] if files else "", 1, 1), instance=getattr(design, "top", ""),
        message=f"rule '{rule.id}' did not run: {budget.reason()}",
        evidence=NotRunEvidence(reason=budget.reason(), key=f"not-run:{rule.id}"),
        fix="raise the time budget (--time-budget SECONDS, or time_budget in the "
            "configuration; 0: none), or lint a smaller part of the design")


def refine(design, diagnostics: list[Diagnostic], context, options: Mapping[str, Any]):
    """Hand the findings to the hazard prover; it shows in full (timed replay, waveform, fix)
    the findings the fold below will show, chosen by the fold's own grouping and ranking."""
    from .analysis.refine import refine as prove
    from .findings.fold import primaries
    return list(prove(design, diagnostics, context, dict(options),
                      shown=lambda ds: primaries(ds, *_fold_by(context))))


def _fold_by(context):
    """What the fold groups findings by: the glitch-sensitive sinks, the net names and the
    nets that drive the sinks."""
    from .findings.netgroup import SinkNets
    return context.sensitive_sinks, context.describe, SinkNets.of(context)


def findings(request: RunRequest, design, context) -> list[Diagnostic]:
    """The findings before acceptances and baseline: the rules, the prover, the front end's
    notes, folded to one per problem."""
    diags = run_rules(design, request.rules, context, request.config.severity)
    if request.prove:
        diags = refine(design, diags, context, request.prove_options)
    # front-end notes ride along unless their rule id is ignored or a selection leaves it
    # out (what the analysis left out is always reported: a selection of rules does not make
    # a partly analysed design look clean)
    sel, ign = request.select, request.ignore
    diags = list(diags) + [n for n in (design.notes or []) if isinstance(n, Diagnostic)
                           and n.rule not in ign and (sel is None or n.rule in sel
                                                      or n.kind in _COVERAGE_KINDS)]
    from .findings.fold import fold
    return fold(diags, *_fold_by(context))


def context_for(request: RunRequest, design):
    """The shared analysis context of a run over ``design`` (the configured cell model
    applied); checks the change-model declarations (exit 2 on bad names)."""
    config = request.config
    if config.cell_model != "atomic":
        from .analysis.cellmodel import decompose_design
        design = decompose_design(design)
    from .analysis.context import AnalysisContext
    context = AnalysisContext(design, config, request.rule_options)
    context.change_model
    return design, context


# ---------------------------------------------------------------------------------------------
# the run

def lint(request: RunRequest, progress=None) -> LintResult:
    """Lint the request's design within its bounds (time budget, size limits, workers)."""
    with bounds(request):
        return _lint(request, progress)


def _lint(request: RunRequest, progress) -> LintResult:
    config = request.config
    design = load(request, progress)
    design, context = context_for(request, design)

    # findings before waivers/baseline come from the result cache when nothing they depend
    # on changed (design key, configuration, rules); waivers and the rest are redone below
    rcache = rkey = None
    if request.use_cache and request.design_key:
        from .store.result import open_result_cache
        rcache = open_result_cache(request.cache_dir, limit_mb=request.cache_limit_mb)
        rkey = request.result_key if rcache is not None else None
    diags = rcache.load(rkey) if rkey else None
    if diags is None:
        diags = findings(request, design, context)
        if rkey and not request.design.texts and not budget.hit():
            rcache.store(rkey, diags)     # findings cut short by the clock are not kept

    kept, waived, baselined = _accept(request, design, diags)
    if request.changed is not None:
        ch = request.changed
        kept = [d for d in kept if _touches(d, ch) or d.kind in _COVERAGE_KINDS]
        waived = [d for d in waived if _touches(d, ch)]
        baselined = [d for d in baselined if _touches(d, ch)]

    kept = sort_diagnostics(kept)
    waived = sort_diagnostics(waived)
    counts = {str(s): sum(1 for d in kept if d.severity == s) for s in Severity}
    counts.update(total=len(kept), waived=len(waived), baselined=len(baselined))
    counts["unlisted"] = _unlisted(context, request)
    return LintResult(diagnostics=kept, waived=waived, design=design, config=config,
                      root=request.root, counts=counts, rules={r.id: r for r in request.rules},
                      baselined=baselined, files=request.files, context=context,
                      incomplete=budget.hit())


def _accept(request: RunRequest, design, diags):
    """(kept, waived, baselined): inline acceptances in every source read and the accept
    file, then the baseline."""
    config = request.config
    sources = list(dict.fromkeys(list(getattr(design, "files", []) or []) + request.files
                                 + list(getattr(design, "includes", []) or [])))
    waivers = scan_sources(sources, request.design.texts)
    if config.accept_file:
        waivers += read_waiver_file(config.accept_file)
    ran = {r.id for r in request.rules} | {d.rule for d in diags}
    kept, waived, problems = apply_waivers(diags, waivers, ran,
                                           set(request.known_ids) | set(PSEUDO_RULES))
    if UNUSED_RULE not in request.ignore:
        level = config.severity.get(UNUSED_RULE)
        kept += [p.with_severity(Severity.parse(level)) if level else p for p in problems]
    baselined: list[Diagnostic] = []
    if request.baseline and (os.path.exists(request.baseline) or request.baseline_given):
        from .baseline import load_baseline
        kept, baselined = load_baseline(request.baseline).split(kept)
    return kept, waived, baselined


def _unlisted(context, request: RunRequest) -> dict:
    """Plain sinks with reconvergent fanout that the reconvergence rule's scope leaves out
    (:mod:`hazlint.findings.scope`); empty when the rule did not run or lists them."""
    from .findings.scope import unlisted
    rid = RECONVERGENCE_RULE
    if rid not in {r.id for r in request.rules} or budget.expired():
        return {}
    scope = (request.rule_options.get(rid) or {}).get("scope")
    u = unlisted(context)
    if scope == "outputs":
        u = type(u)(0, u.data_pins)
    elif scope != "async":
        return {}
    return u.to_json() if u else {}


def _touches(d: Diagnostic, changed) -> bool:
    if d.location.path and norm(d.location.path) in changed:
        return True
    for flow in d.flows:
        for h in flow:
            if h.location is not None and h.location.path and norm(h.location.path) in changed:
                return True
    # a glitching net's finding is at its driver: a changed file holding any of its pins
    # (a register added to the net) touches it too
    from .diagnostics import pin_problems
    return any(m[1] and norm(m[1]) in changed for _, ms in pin_problems(d) for m in ms)


# ---------------------------------------------------------------------------------------------
# finished reports

def report_key(request: RunRequest, render: Mapping[str, Any] | None = None) -> str | None:
    """sha256 over everything a finished report depends on, computed without reading the
    design: the findings' key (:attr:`RunRequest.result_key` over the design key), the
    waiver file's and the baseline's contents, the changed-files filter, the project root and
    the working directory (paths in reports are relative), and ``render`` (format and
    renderer options). Files pulled in through ``include`` are not in the key: the report
    cache checks them as dependencies of the entry. None when some input cannot be read (the
    run then goes the normal way and reports the problem)."""
    import hashlib
    import json
    from .store.files import digest_file
    rkey = request.result_key
    if rkey is None:
        return None
    digests = {}
    for tag, p in (("waivers", request.config.accept_file), ("baseline", request.baseline)):
        if p:
            digests[tag] = [os.path.abspath(p), digest_file(p) if os.path.exists(p) else None]
    material = {
        "result": rkey, "inputs": digests, "cwd": request.cwd, "root": request.root,
        "baseline_given": request.baseline_given,
        "changed": None if request.changed is None else sorted(request.changed),
        "render": dict(render or {}),
    }
    try:
        text = json.dumps(material, sort_keys=True, default=repr)
    except (TypeError, ValueError):
        return None
    return hashlib.sha256(text.encode("utf-8", "surrogateescape")).hexdigest()


class ReportSlot:
    """The finished report of a request rendered one way (``render``: format and renderer
    options) in the report cache (:mod:`hazlint.store.report`): :meth:`load` on a rerun with
    unchanged inputs, :meth:`store` after a run."""

    def __init__(self, request: RunRequest, render: Mapping[str, Any]):
        from .store.report import open_report_cache
        self.key = report_key(request, render)
        self.cache = open_report_cache(request.cache_dir, limit_mb=request.cache_limit_mb) \
            if self.key else None

    def load(self):
        """``(file, worst)`` of a kept report (see :meth:`ReportCache.load`), or None."""
        return self.cache.load(self.key) if self.cache is not None else None

    def store(self, result: LintResult, write):
        """Render through ``write(stream)`` into the cache: ``(path, keep)`` of the report
        file, or None when it is not kept (the run was cut short, or no cache)."""
        if self.cache is None or result.incomplete:
            return None
        # the input files' contents are in the key; what they include is checked on a hit
        worst = max((int(d.severity) for d in result.diagnostics), default=None)
        includes = [os.path.abspath(p) for p in getattr(result.design, "includes", None) or ()]
        return self.cache.store(self.key, write, worst, includes)
