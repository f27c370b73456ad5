"""Findings as problems: what a report lists, named one way.

* :mod:`.fold` turns the rules' diagnostics into one finding per problem (a hazard at a sink, a
  loop), folding in the evidence of every rule and stem that describes it;
* :mod:`.scope` counts the places the default scope leaves out (reconvergent fanout that only
  reaches a plain output or a register's data pin);
* :mod:`.names` keeps the old spellings of rule ids and configuration keys working for one
  release, with one deprecation note per run.
"""
