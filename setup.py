"""Build step for the optional compiled kernel (everything else is in pyproject.toml).

``hazlint.analysis._arrival`` is a small C extension (the reconvergence rule's arrival sweep),
``hazlint.analysis._timedloop`` another (the timed simulator's event loop). Both are optional:
without a C compiler the build skips them and hazlint uses its numpy/Python code, which gives
the same findings more slowly.
"""
from setuptools import Extension, setup

setup(ext_modules=[Extension("hazlint.analysis._arrival", ["hazlint/analysis/_arrival.c"],
                             optional=True, extra_compile_args=["-O3"]),
                   Extension("hazlint.analysis._timedloop", ["hazlint/analysis/_timedloop.c"],
                             optional=True, extra_compile_args=["-O3"])])
