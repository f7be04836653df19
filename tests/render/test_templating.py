"""Template environments, the sandbox, errors that name the line, and the template filters."""

from __future__ import annotations

import math
from decimal import Decimal
from pathlib import Path

import jinja2
import pytest
from hypothesis import given
from hypothesis import strategies as st
from jinja2.sandbox import ImmutableSandboxedEnvironment

from notegen.errors import TemplateError
from notegen.render import (
    escape_markdown,
    format_number,
    join_words,
    make_environment,
    markdown_to_html_page,
    markdown_to_text,
    render_template,
)


def write(folder: Path, name: str, text: str) -> Path:
    path = folder / name
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(text, encoding="utf-8")
    return path


def render_source(tmp_path: Path, source: str, context: dict[str, object], *, sandboxed: bool = True) -> str:
    write(tmp_path, "note.md.j2", source)
    env = make_environment([tmp_path], sandboxed=sandboxed)
    return render_template(env, "note.md.j2", context)


# Environments ---------------------------------------------------------------


def test_environment_settings(tmp_path: Path) -> None:
    env = make_environment([tmp_path], sandboxed=False)
    assert env.undefined is jinja2.StrictUndefined
    assert env.autoescape is False
    assert env.trim_blocks and env.lstrip_blocks
    assert not isinstance(env, jinja2.sandbox.SandboxedEnvironment)
    assert isinstance(make_environment([tmp_path], sandboxed=True), ImmutableSandboxedEnvironment)


def test_block_tags_leave_no_blank_lines_or_indent(tmp_path: Path) -> None:
    source = (
        "Items:\n{% for item in items %}\n  {% if item %}\n- {{ item }}\n  {% endif %}\n{% endfor %}\nEnd\n"
    )
    assert render_source(tmp_path, source, {"items": ["a", "", "b"]}) == "Items:\n- a\n- b\nEnd\n"


def test_environment_is_built_once_per_folder_list(tmp_path: Path) -> None:
    first, second = tmp_path / "first", tmp_path / "second"
    first.mkdir()
    second.mkdir()
    env = make_environment([first, second], sandboxed=True)
    assert make_environment((first, second / ".." / "second"), sandboxed=True) is env
    assert make_environment([second, first], sandboxed=True) is not env
    assert make_environment([first, second], sandboxed=False) is not env


def test_missing_template_folder_is_a_template_error(tmp_path: Path) -> None:
    with pytest.raises(TemplateError, match="template folder does not exist"):
        make_environment([tmp_path / "nowhere"], sandboxed=True)


def test_template_found_by_path_inside_a_folder(tmp_path: Path) -> None:
    path = write(tmp_path, "service/own.md.j2", "pH {{ ph|fmt(2) }}\n")
    env = make_environment([tmp_path], sandboxed=True)
    assert render_template(env, path, {"ph": 7.5}) == "pH 7.50\n"


def test_template_path_outside_the_folders_is_refused(tmp_path: Path) -> None:
    inside, outside = tmp_path / "inside", tmp_path / "outside"
    inside.mkdir()
    path = write(outside, "own.md.j2", "x\n")
    env = make_environment([inside], sandboxed=True)
    with pytest.raises(TemplateError, match="outside the template folders") as caught:
        render_template(env, path, {})
    assert caught.value.template == str(path)


def test_unknown_template_name(tmp_path: Path) -> None:
    env = make_environment([tmp_path], sandboxed=True)
    with pytest.raises(TemplateError, match="not found") as caught:
        render_template(env, "absent.md.j2", {})
    assert caught.value.template == "absent.md.j2"


# Case text is data ------------------------------------------------------------


def test_template_syntax_in_a_value_prints_literally(tmp_path: Path) -> None:
    source = "Plain: {{ label }}\nEscaped: {{ label|md }}\n"
    out = render_source(tmp_path, source, {"label": "{{ 7*7 }} {% if x %}"})
    assert out == "Plain: {{ 7*7 }} {% if x %}\nEscaped: {{ 7\\*7 }} {% if x %}\n"


def test_md_filter_keeps_a_label_inside_its_table_cell(tmp_path: Path) -> None:
    source = (
        "| Label | Value |\n|---|--:|\n"
        "{% for row in rows %}\n| {{ row.label|md }} | {{ row.value|fmt(1) }} |\n{% endfor %}\n"
    )
    rows = [{"label": "| a | **x**", "value": 1.25}, {"label": "{{ 7*7 }}", "value": -0.04}]
    markdown = render_source(tmp_path, source, {"rows": rows})
    assert markdown_to_text(markdown) == (
        "Label        Value\n"
        "-----------  -----\n"
        "| a | **x**    1.3\n"
        "{{ 7*7 }}      0.0\n"
    )
    page = markdown_to_html_page(markdown, title="t")
    assert "<td>| a | **x**</td>" in page and "<td>{{ 7*7 }}</td>" in page
    assert page.count("<tr>") == 3


def test_md_filter_round_trips_script_through_text_and_html(tmp_path: Path) -> None:
    label = "<script>alert(1)</script> _x_"
    markdown = render_source(tmp_path, "Medication: {{ label|md }}\n", {"label": label})
    assert markdown_to_text(markdown) == f"Medication: {label}\n"
    page = markdown_to_html_page(markdown, title="t")
    assert "<p>Medication: &lt;script&gt;alert(1)&lt;/script&gt; _x_</p>" in page


# Errors name the template and line ---------------------------------------------


def test_undefined_variable_names_the_line(tmp_path: Path) -> None:
    with pytest.raises(TemplateError, match="undefined value: 'missing' is undefined") as caught:
        render_source(tmp_path, "one\ntwo\n{{ missing }}\n", {})
    assert caught.value.template == str(tmp_path / "note.md.j2")
    assert caught.value.line == 3
    assert str(caught.value).startswith(f"{tmp_path / 'note.md.j2'}, line 3: ")


def test_undefined_attribute_names_the_line(tmp_path: Path) -> None:
    with pytest.raises(TemplateError) as caught:
        render_source(tmp_path, "{% if case %}\n\n{{ case.nothing_here }}\n{% endif %}\n", {"case": {"a": 1}})
    assert caught.value.line == 3
    assert "nothing_here" in str(caught.value)


def test_syntax_error_names_the_line(tmp_path: Path) -> None:
    with pytest.raises(TemplateError, match="syntax error") as caught:
        render_source(tmp_path, "fine\n{% if %}\n{% endif %}\n", {})
    assert caught.value.line == 2
    assert caught.value.template == str(tmp_path / "note.md.j2")


def test_error_in_an_included_template_names_that_template(tmp_path: Path) -> None:
    write(tmp_path, "part.md.j2", "a\nb\n{{ gone }}\n")
    with pytest.raises(TemplateError) as caught:
        render_source(tmp_path, "top\n{% include 'part.md.j2' %}\n", {})
    assert caught.value.template == str(tmp_path / "part.md.j2")
    assert caught.value.line == 3


def test_printing_none_is_refused(tmp_path: Path) -> None:
    with pytest.raises(TemplateError, match="missing") as caught:
        render_source(tmp_path, "Albumin: {{ albumin }}\n", {"albumin": None})
    assert caught.value.line == 1


def test_filter_given_the_wrong_type_names_the_line(tmp_path: Path) -> None:
    with pytest.raises(TemplateError, match="fmt expects a number") as caught:
        render_source(tmp_path, "\n{{ value|fmt(1) }}\n", {"value": "7.4"})
    assert caught.value.line == 2


# The sandbox -------------------------------------------------------------------


@pytest.mark.parametrize(
    "source",
    [
        "ok\n{{ ''.__class__.__mro__ }}\n",
        "ok\n{{ cycler.__init__.__globals__ }}\n",
        "ok\n{{ lipsum.__globals__['os'] }}\n",
        "ok\n{% set _ = items.append(4) %}\n",
    ],
    ids=["class-mro", "cycler-globals", "lipsum-globals", "mutate-context"],
)
def test_sandbox_refuses_reaching_python_internals(tmp_path: Path, source: str) -> None:
    with pytest.raises(TemplateError, match="refused by the sandbox") as caught:
        render_source(tmp_path, source, {"items": [1, 2, 3]})
    assert caught.value.line == 2


@pytest.mark.parametrize(
    "source",
    ["{{ ('x' * 10**7)|length }}", "{{ [0] * 1000000 }}", "{{ 2 ** 100000 }}", "{{ 100000 * 'ab' }}"],
    ids=["string-repeat", "list-repeat", "big-power", "repeat-reversed"],
)
def test_sandbox_refuses_building_huge_values(tmp_path: Path, source: str) -> None:
    with pytest.raises(TemplateError, match="line 1: refused by the sandbox"):
        render_source(tmp_path, source, {})


def test_sandbox_allows_small_arithmetic(tmp_path: Path) -> None:
    assert render_source(tmp_path, "{{ '-' * 3 }}{{ 2 ** 3 }}{{ 3 * 4 }}", {}) == "---812"


def test_sandbox_still_reads_the_context(tmp_path: Path) -> None:
    source = "{{ names|map('md')|join_words }}; {{ items|length }}\n"
    assert render_source(tmp_path, source, {"names": ["a*", "b"], "items": [1, 2]}) == "a\\* and b; 2\n"


# Filters -----------------------------------------------------------------------


@pytest.mark.parametrize(
    ("value", "digits", "expected"),
    [
        (-0.04, 1, "0.0"),
        (-0.0, 1, "0.0"),
        (-0.0, 0, "0"),
        (-0.4, 0, "0"),
        (Decimal("-0.001"), 2, "0.00"),
        (2.675, 2, "2.68"),  # binary floating point alone would give 2.67
        (12.5, 0, "13"),
        (-12.5, 0, "-13"),
        (7, 2, "7.00"),
        (7.4049, 2, "7.40"),
        (-1.05, 1, "-1.1"),
    ],
)
def test_format_number(value: float | Decimal, digits: int, expected: str) -> None:
    assert format_number(value, digits) == expected


@pytest.mark.parametrize(
    ("value", "digits", "error"),
    [
        (True, 1, TypeError),
        ("7.4", 1, TypeError),
        (None, 1, TypeError),
        (math.nan, 1, ValueError),
        (math.inf, 1, ValueError),
        (Decimal("NaN"), 1, ValueError),
        (1.0, -1, ValueError),
        (1.0, 1.5, ValueError),
    ],
)
def test_format_number_refuses_non_numbers(value: object, digits: object, error: type[Exception]) -> None:
    with pytest.raises(error):
        format_number(value, digits)  # type: ignore[arg-type]


@given(st.floats(min_value=-1e6, max_value=1e6, allow_nan=False), st.integers(min_value=0, max_value=4))
def test_format_number_never_prints_negative_zero_and_stays_close(value: float, digits: int) -> None:
    printed = format_number(value, digits)
    assert not printed.startswith("-") or float(printed) < 0
    assert len(printed.partition(".")[2]) == digits
    assert abs(float(printed) - value) <= 0.5 * 10**-digits + 1e-9


@pytest.mark.parametrize(
    ("items", "conj", "expected"),
    [
        ([], "and", ""),
        (["vomiting"], "and", "vomiting"),
        (["vomiting", "diuretics"], "and", "vomiting and diuretics"),
        (["vomiting", "diuretics", "hypokalemia"], "and", "vomiting, diuretics and hypokalemia"),
        (["a", "b", "c", "d"], "or", "a, b, c or d"),
        ((n for n in (1, 2)), "and", "1 and 2"),
    ],
    ids=["none", "one", "two", "three", "four-or", "generator"],
)
def test_join_words(items: list[str], conj: str, expected: str) -> None:
    assert join_words(items, conj) == expected


def test_join_words_as_a_filter_with_another_conjunction(tmp_path: Path) -> None:
    assert render_source(tmp_path, "{{ xs|join_words('or') }}\n", {"xs": ["a", "b", "c"]}) == "a, b or c\n"


@pytest.mark.parametrize(
    ("raw", "escaped"),
    [
        ("**x**", "\\*\\*x\\*\\*"),
        ("| a |", "\\| a \\|"),
        ("{{ 7*7 }}", "{{ 7\\*7 }}"),
        ("pH <7.2", "pH <7.2"),
        ("<b>x</b>", "\\<b>x\\</b>"),
        ("1. first", "1\\. first"),
        ("7.45", "7.45"),
        ("-0.5", "-0.5"),
        ("- item", "\\- item"),
        ("# heading", "\\# heading"),
        ("#2 bed", "#2 bed"),
        ("> quote", "\\> quote"),
        ("AT&amp;T", "AT\\&amp;T"),
        ("A & B", "A & B"),
        ("line one\n\nline  two", "line one line two"),
        ("  ", ""),
        (42, "42"),
    ],
)
def test_escape_markdown(raw: object, escaped: str) -> None:
    assert escape_markdown(raw) == escaped


def test_escape_markdown_refuses_none() -> None:
    with pytest.raises(TypeError, match="missing"):
        escape_markdown(None)
