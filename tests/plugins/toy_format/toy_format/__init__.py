"""A report format registered by a package of its own: one tab-separated line per finding.

    rule<TAB>severity<TAB>path:line<TAB>instance<TAB>message

then ``# N findings``. Paths are what ``result.relpath`` gives (relative to the project root);
tabs and line breaks inside a field become spaces, so every finding is exactly one line.
"""

NAME = "toy"
SUMMARY = "one tab-separated line per finding (example plugin)"


def _field(text) -> str:
    return " ".join(("" if text is None else str(text)).split())


def write(result, stream, options) -> None:
    count = 0
    for d in result.diagnostics:
        where = f"{result.relpath(d.location.path)}:{d.location.line}"
        stream.write("\t".join(_field(x) for x in (d.rule, d.severity, where, d.instance,
                                                   d.message)) + "\n")
        count += 1
    stream.write(f"# {count} findings\n")
