"""Front ends: source files -> IR (:mod:`hazlint.ir`).

:func:`hazlint.frontends.registry.read_sources` is the one entry point; it picks a reader per
file (``verilog/``: our preprocessor and pyverilog's grammar; ``slang/``: pyslang).
:mod:`.driver` is what every reader shares, :mod:`.files` reads a file or an editor buffer,
:mod:`.literals` parses literals and attributes for both readers.
"""
