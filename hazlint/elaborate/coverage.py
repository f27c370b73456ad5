"""What the analysis covers: modules that could not be modelled and files that could not be
read, reported so that a partly analysed design never looks clean.

* A module holding a construct hazlint cannot turn into logic (a loop bound that depends on
  signals, ``disable``, event controls inside a block, real arithmetic, ...) is left out: its
  instances become black boxes whose outputs are free inputs for the rest of the design. Each
  such module is one warning (rule ``front-end``, kind ``not-analysed``) naming the construct
  and where it is, and the design records it (:attr:`hazlint.netlist.design.Design.not_analysed`), which
  the report's summary line counts ("1 of 5 modules not analysed: ..."). Warnings fail a run
  under the default ``fail_on = "warning"``.
* A file the parser rejects stops the run (exit 2) when the chosen top module(s) need a module
  or primitive it defines (or when no module at all could be read); otherwise it is one warning
  and the rest of the design is analysed.
"""
from __future__ import annotations

from ..diagnostics import Severity
from ..errors import ParseError
from .. import ir
from .common import walk_items

class CoverageTracker:
    """Modules elaborated and modules left out (a mixin of the Elaborator)."""

    def module_seen(self, name: str) -> None:
        self.__dict__.setdefault("_modules_seen", set()).add(name)

    def module_not_analysed(self, m: ir.Module, reason: str, loc, instance: str) -> None:
        recs = self.__dict__.setdefault("_not_analysed", {})
        rec = recs.get(m.name)
        if rec is None:
            rec = recs[m.name] = {"module": m.name, "reason": reason,
                                  "path": loc.path if loc else (m.loc.path if m.loc else ""),
                                  "line": loc.line if loc else (m.loc.line if m.loc else 0),
                                  "instances": []}
        rec["instances"].append(instance)

    def coverage_report(self) -> tuple[list[str], list[dict]]:
        """(names of the modules elaborated, records of those not analysed), and one warning
        per module left out."""
        recs = sorted(self.__dict__.get("_not_analysed", {}).values(), key=lambda r: r["module"])
        for r in recs:
            n = len(r["instances"])
            first = r["instances"][0]
            more = f" and {n - 1} more" if n > 1 else ""
            self.note(f"module '{r['module']}' is not analysed: {r['reason']}; its "
                      f"instance{'s' if n > 1 else ''} ({first}{more}) "
                      f"{'are black boxes' if n > 1 else 'is a black box'} whose outputs are "
                      "free inputs for the rest of the design",
                      ir.Loc(r["path"], r["line"]) if r["path"] else None, first,
                      key=("not-analysed", r["module"]), severity=Severity.WARNING,
                      kind="not-analysed")
        return sorted(self.__dict__.get("_modules_seen", ())), recs

    # ---------------------------------------------------------------- unparsable files
    def check_unread_files(self, tops: list[str], cell_known) -> None:
        """Stop with the parse error of a file the chosen tops need; report the others."""
        failed = [sf for sf in self.sources if getattr(sf, "error", None)]
        if not failed:
            return
        needed = self._needed_cells(tops)
        for sf in failed:
            err = sf.error
            names = set(err.get("modules") or ())
            wanted = sorted(n for n in names & needed if not cell_known(n))
            if wanted or not self.modules:
                raise ParseError(err["message"], path=err.get("path") or sf.path,
                                 line=err.get("line"), column=err.get("column"),
                                 construct=err.get("construct"))
            self.note(f"file not read ({err['message']}); the chosen top module(s) do not "
                      f"need what it defines "
                      f"({', '.join(sorted(names)) or 'no module found'}), so it is left out",
                      ir.Loc(err.get("path") or sf.path, err.get("line") or 1,
                             err.get("column") or 1), "",
                      key=("unread", sf.path), severity=Severity.WARNING, kind="file-not-read")

    def _needed_cells(self, tops) -> set[str]:
        need = set(tops)
        todo = [t for t in tops if t in self.modules]
        while todo:
            m = self.modules[todo.pop()]
            for it in walk_items(m.items):
                if isinstance(it, ir.Instance) and it.cell not in need:
                    need.add(it.cell)
                    if it.cell in self.modules:
                        todo.append(it.cell)
        return need
