"""Build step for the optional compiled kernels (everything else is in pyproject.toml).

``hazlint.analysis._arrival`` is a small C extension (the reconvergence rule's arrival sweep),
``hazlint.analysis._timedloop`` another (the timed simulator's event loop), and
``hazlint.elaborate._flatnet`` reads and elaborates flat gate-level modules (the slang front
end's fast path). All are optional: without a C compiler the build skips them and hazlint
uses its Python code, which gives the same results more slowly.
"""
from setuptools import Extension, setup

setup(ext_modules=[Extension("hazlint.analysis._arrival", ["hazlint/analysis/_arrival.c"],
                             optional=True, extra_compile_args=["-O3"]),
                   Extension("hazlint.elaborate._flatnet", ["hazlint/elaborate/_flatnet.c"],
                             optional=True, extra_compile_args=["-O3"]),
                   Extension("hazlint.analysis._timedloop", ["hazlint/analysis/_timedloop.c"],
                             optional=True, extra_compile_args=["-O3"])])
