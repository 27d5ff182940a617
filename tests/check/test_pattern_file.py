"""Reading a pattern file (pattern_file.py): only restricted expressions are evaluated.

Bad input must give a ModelError naming the offending item (project rule); the items
named here are those of the pattern text in the test.
"""
from __future__ import annotations

import pytest
from hand_patterns import ROOF

from hingeline import ModelError
from hingeline.check import pattern_from_toml


@pytest.mark.parametrize("expr, words", [
    ('__import__("os").getcwd()', "not allowed"),
    ("a ** 2", "operator that is not allowed"),
    ("c + 1", "'c', which is not a parameter"),
    ("a +", "not a valid expression"),
])
def test_expressions_restricted(expr, words):
    # Only numbers, parameter names, + - * / ( ) and unary minus are evaluated (ast, no eval).
    text = ROOF.replace('["2 - a", 0.5], ["a", 0.5]]', f"['{expr}', 0.5], [\"a\", 0.5]]", 1)
    assert text != ROOF
    with pytest.raises(ModelError) as err:
        pattern_from_toml(text)
    assert words in str(err.value) and "region 'south'.polygon[2][0]" in str(err.value)
