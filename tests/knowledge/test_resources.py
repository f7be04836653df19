"""The one reader of rule files (knowledge/rules_yaml.py): plain types only, and no key given twice."""

from __future__ import annotations

from typing import Any

import pytest

from notegen.errors import RulePackError
from notegen.knowledge.rules_yaml import parse_rules_text
from notegen.resources import rules_dir


def read_yaml_safely(text: str) -> Any:
    return parse_rules_text(text, "rule.yaml")[0]


def test_plain_yaml_is_read() -> None:
    assert read_yaml_safely("a: 1\nb: [x, y]\n") == {"a": 1, "b": ["x", "y"]}


@pytest.mark.parametrize(
    "text",
    ["a: 1\na: 2\n", "{a: 1, a: 2}\n", "outer:\n  x: 1\n  x: 1\n", "- {k: 1, k: 1}\n"],
    ids=["top", "same-line", "nested-same-value", "in-a-list"],
)
def test_a_key_given_twice_is_refused(text: str) -> None:
    with pytest.raises(RulePackError, match="is given twice"):
        read_yaml_safely(text)


def test_a_control_character_in_a_repeated_key_is_escaped_in_the_message() -> None:
    with pytest.raises(RulePackError) as info:
        read_yaml_safely('"a\\x1b[2J": 1\n"a\\x1b[2J": 2\n')
    assert "\x1b" not in str(info.value)
    assert "a\\u001b[2J" in str(info.value)


def test_python_tags_are_refused() -> None:
    with pytest.raises(RulePackError):
        read_yaml_safely("!!python/object/apply:os.system ['true']\n")


def test_every_shipped_vocabulary_file_reads_with_the_strict_loader() -> None:
    files = sorted((rules_dir() / "vocabulary").glob("*.yaml")) + [rules_dir() / "fields.yaml"]
    assert len(files) >= 4
    for path in files:
        assert isinstance(read_yaml_safely(path.read_text(encoding="utf-8")), dict), path
