"""hazlint's built-in rules (import name ``hazlint_rules``).

Each module is one rule, its documentation in the module docstring beside the code that checks it.
They are registered through the ``hazlint.rules`` entry-point group in pyproject.toml, the same way
a third-party package registers its rules.
"""
