"""Build step for the optional compiled kernel (everything else is in pyproject.toml).

``hazlint.analysis._arrival`` is a small C extension (the reconvergence rule's arrival sweep).
It is optional: without a C compiler the build skips it and hazlint uses its numpy/Python
solvers, which give the same findings more slowly.
"""
from setuptools import Extension, setup

setup(ext_modules=[Extension("hazlint.analysis._arrival", ["hazlint/analysis/_arrival.c"],
                             optional=True, extra_compile_args=["-O3"])])
