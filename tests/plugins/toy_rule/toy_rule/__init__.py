"""Example hazlint rules (a test package; see tests/test_rule_plugin.py)."""
