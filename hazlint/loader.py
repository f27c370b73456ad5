"""Loading a design: the front end (files -> IR) then elaboration (IR -> Design), the one
function for callers that need a design without the run's caches (commands, tests, benches).
The lint run itself (:func:`hazlint.pipeline.load`) adds the design cache and SDF on top."""
from __future__ import annotations

from typing import TYPE_CHECKING, Iterable, Mapping, Sequence

if TYPE_CHECKING:
    from .netlist.design import Design


def load_design(paths: str | Sequence[str], top: str | Sequence[str] | None = None,
                include_dirs: Iterable[str] = (), defines: Mapping[str, str] | None = None,
                library=None, **options) -> Design:
    """Read Verilog sources and elaborate them into a :class:`~hazlint.netlist.design.Design`.

    ``library`` is a :class:`hazlint.netlist.library.Library`, a mapping of cell name to configuration
    table (see :func:`hazlint.netlist.library.cell_from_config`), or a path to a Liberty file.
    """
    from .elaborate import elaborate
    from .frontends.registry import read_sources
    from .gcpause import collector_paused
    if isinstance(paths, str):
        paths = [paths]
    reader_keys = ("root", "jobs", "cache", "texts", "progress", "tables", "frontend")
    # loading builds millions of small acyclic objects: no cyclic collector passes meanwhile
    with collector_paused():
        sources = read_sources(list(paths), include_dirs=list(include_dirs),
                               defines=dict(defines or {}), tolerant=True,
                               **{k: v for k, v in options.items() if k in reader_keys})
        return elaborate(sources, top=top, library=library,
                         **{k: v for k, v in options.items() if k not in reader_keys})
