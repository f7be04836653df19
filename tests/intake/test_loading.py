"""Reading case text: malformed, hostile and odd files give a located error."""

from __future__ import annotations

import pytest

from notegen.errors import CaseFileError
from notegen.intake.files import decode, parse_text


def _error(text: str, filename: str = "case.yaml") -> str:
    with pytest.raises(CaseFileError) as info:
        parse_text(text, filename)
    return str(info.value)


def test_yaml_and_json_parse_to_the_same_data() -> None:
    assert parse_text("gas:\n  ph: 7.5\n", "a.yaml") == parse_text('{"gas": {"ph": 7.5}}', "a.json")


def test_a_yaml_file_may_start_with_a_flow_mapping() -> None:
    # `{` at the start does not make a .yaml file JSON: unquoted keys are plain YAML
    assert parse_text("{gas: {ph: 7.5, pco2: 48}}\n", "case.yml") == {"gas": {"ph": 7.5, "pco2": 48}}


def test_a_broken_flow_mapping_in_a_yaml_file_is_a_yaml_mistake() -> None:
    message = _error("{gas: {ph: 7.5\n")
    assert message.startswith("case.yaml, line 2, column 1: not valid YAML"), message
    assert "JSON" not in message


@pytest.mark.parametrize("filename", ["<stdin>", "case", "case.txt"])
def test_text_without_a_yaml_or_json_name_is_read_as_it_looks(filename: str) -> None:
    assert parse_text('{"gas": {"ph": 7.5}}', filename) == {"gas": {"ph": 7.5}}
    assert parse_text("gas:\n  ph: 7.5\n", filename) == {"gas": {"ph": 7.5}}
    assert "not valid JSON" in _error('{"gas": }', filename)


def test_malformed_yaml_names_line_and_column() -> None:
    assert _error("gas:\n  ph: [7.5\n").startswith("case.yaml, line 3, column 1: not valid YAML")


def test_malformed_json_names_line_and_column() -> None:
    assert _error('{"gas":\n {"ph": 7.5,}}', "case.json") == (
        "case.json, line 2, column 13: not valid JSON: Expecting property name enclosed in double quotes"
    )


def test_duplicate_yaml_key_is_refused_with_both_lines() -> None:
    assert _error("chem:\n  na: 132\n  na: 140\n") == (
        "case.yaml, line 3, column 3: `na` is given twice (first on line 2); keep one value"
    )


def test_duplicate_json_key_is_refused() -> None:
    assert "`na` is given twice" in _error('{"chem": {"na": 132, "na": 140}}', "case.json")


def test_yaml_alias_is_refused() -> None:
    bomb = 'a: &a ["x","x"]\nb: &b [*a, *a]\nc: [*b, *b]\n'
    assert _error(bomb) == (
        "case.yaml, line 2, column 8: YAML aliases (*name) are not allowed in a case file; write the value out"
    )


def test_python_object_tag_is_refused() -> None:
    message = _error("case: !!python/object/apply:os.system ['echo hi']\n")
    assert "YAML tags" in message and "line 1" in message


def test_deep_nesting_is_refused() -> None:
    assert "nested more than 12 levels" in _error("a: " + "[" * 50 + "]" * 50 + "\n")
    assert "nested more than 12 levels" in _error("[" * 10_000 + "]" * 10_000)


def test_non_utf8_bytes_name_the_line() -> None:
    with pytest.raises(CaseFileError) as info:
        decode(b"case: ok\nchem:\n  na: \xff\n", "bad.yaml")
    assert str(info.value) == "bad.yaml, line 3: not UTF-8 text (byte 0xff); save the file as UTF-8"


def test_empty_file_is_refused() -> None:
    with pytest.raises(CaseFileError, match="the file is empty"):
        decode(b"  \n\n", "empty.yaml")
