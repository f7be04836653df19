"""A service's template renders under a budget: real paths inside its folders, capped widths and sizes,
a time limit, and self-reference reported with the template's line (exit status 2).

Each source below reached one to two gigabytes, hung, or crashed with RecursionError before the fix.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from typer.testing import CliRunner

from notegen.cli.app import app
from notegen.errors import TemplateError
from notegen.render import make_environment, render_template
from notegen.render import template_budget as budget

ROOT = Path(__file__).resolve().parents[2]
SAMPLE = ROOT / "samples" / "thiazide_and_vomiting.yaml"
runner = CliRunner()


def write(folder: Path, name: str, text: str) -> Path:
    path = folder / name
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(text, encoding="utf-8")
    return path


def render_source(folder: Path, source: str, context: dict[str, object] | None = None) -> str:
    write(folder, "note.md.j2", source)
    return render_template(make_environment([folder], sandboxed=True), "note.md.j2", context or {})


def test_an_include_through_a_link_out_of_the_folder_is_refused(tmp_path: Path) -> None:
    secret = write(tmp_path / "elsewhere", "secret.txt", "not for a note\n")
    folder = tmp_path / "service"
    folder.mkdir()
    (folder / "part.md.j2").symlink_to(secret)
    with pytest.raises(TemplateError, match="link to a file outside the template folders") as caught:
        render_source(folder, "ok\n{% include 'part.md.j2' %}\n")
    assert caught.value.line == 2
    with pytest.raises(TemplateError, match="outside the template folders"):
        render_source(folder, "{% import 'part.md.j2' as p %}")


def test_a_link_inside_the_folder_still_works(tmp_path: Path) -> None:
    folder = tmp_path / "service"
    write(folder, "parts/real.md.j2", "inside\n")
    (folder / "alias.md.j2").symlink_to(folder / "parts" / "real.md.j2")
    assert render_source(folder, "{% include 'alias.md.j2' %}") == "inside\n"


@pytest.mark.parametrize(
    "source",
    [
        "{{ 'x'|center(1000000000) }}",
        "{{ 'xy'|indent(1000000000) }}",
        "{{ 'xy'|indent(' ' * 5000) }}",
        "{{ '%1000000000d'|format(1) }}",
        "{{ '%.1000000000f'|format(1.5) }}",
        "{{ '%*d'|format(1000000000, 1) }}",
        "{{ '%1000000000s' % 'x' }}",
        "{{ '{:>1000000000}'.format('x') }}",
        "{{ '{:{w}}'.format('x', w=1000000000) }}",
        "{{ 'x'.ljust(1000000000) }}",
        "{{ 'x'.zfill(1000000000) }}",
        "{{ ('x' * 100000)|replace('x', 'x' * 100000) }}",
        "{{ ('x' * 100000).replace('x', 'yy' * 50000) }}",
        "{{ (['x' * 100000] * 100000)|join }}",
        "{{ ''.join(['x' * 100000] * 100000) }}",
        "{{ ('x' * 100000)|wordwrap(1, wrapstring='y' * 100000) }}",
        "{{ {'a': [1, 2]}|tojson(indent=1000000000) }}",
        "{% set s = 'x' * 100000 %}" + "{% set s = s ~ s %}" * 30 + "{{ s|length }}",
        "{% set s = ['x'] * 100000 %}{% set t = s + s + s + s + s + s + s + s + s + s + s %}{{ t|length }}",
        "{{ lipsum(n=10000000) }}",
    ],
    ids=["center", "indent", "indent-text", "format-width", "format-precision", "format-star", "percent",
         "str-format", "nested-format", "ljust", "zfill", "replace-filter", "replace-method", "join-filter",
         "join-method", "wordwrap", "tojson-indent", "concat-doubling", "list-plus", "lipsum"],
)
def test_widths_counts_and_built_values_are_capped(tmp_path: Path, source: str) -> None:
    with pytest.raises(TemplateError, match="refused by the sandbox") as caught:
        render_source(tmp_path, source)
    assert caught.value.line == 1


def test_ordinary_widths_and_joins_still_work(tmp_path: Path) -> None:
    source = ("{{ 'ab'|center(6) }}|{{ '%5.1f'|format(2.25) }}|{{ '{:>4}'.format('x') }}|{{ ['a', 'b']|join(', ') }}"
              "|{{ 'a' ~ 'b' }}|{{ [1] + [2] }}|{{ 'x\ny'|indent(2) }}|{{ lipsum(1, html=False)|length > 0 }}")
    assert render_source(tmp_path, source) == "  ab  |  2.2|   x|a, b|ab|[1, 2]|x\n  y|True"


def test_the_rendered_note_is_capped_in_size(tmp_path: Path) -> None:
    source = "{% for _ in range(100000) %}{{ 'x' * 50 }}{% endfor %}"  # 5 MB of output from small pieces
    with pytest.raises(TemplateError, match="the note would be longer than 2,000,000 characters"):
        render_source(tmp_path, source)


@pytest.mark.parametrize(
    "source",
    [
        "{% for a in range(100000) %}{% for b in range(100000) %}{% endfor %}{% endfor %}",
        "{% macro m(n) %}{% if n %}{{ m(n - 1) }}{{ m(n - 1) }}{% endif %}{% endmacro %}{{ m(40) }}",
    ],
    ids=["nested-loops", "macro-fan-out"],
)
def test_a_render_that_runs_too_long_is_stopped(tmp_path: Path, source: str, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(budget, "RENDER_SECONDS", 0.3)
    with pytest.raises(TemplateError, match="ran past its time budget") as caught:
        render_source(tmp_path, source)
    assert caught.value.template is not None and caught.value.template.endswith("note.md.j2")


@pytest.mark.parametrize(
    ("files", "source"),
    [
        ({}, "{% include 'note.md.j2' %}"),
        ({}, "{% extends 'note.md.j2' %}"),
        ({}, "{% import 'note.md.j2' as me %}"),
        ({}, "{% macro m() %}{{ m() }}{% endmacro %}{{ m() }}"),
        ({"a.md.j2": "{% include 'b.md.j2' %}", "b.md.j2": "{% include 'a.md.j2' %}"}, "{% include 'a.md.j2' %}"),
    ],
    ids=["self-include", "self-extends", "self-import", "recursive-macro", "include-cycle"],
)
def test_self_reference_is_a_located_template_error(tmp_path: Path, files: dict[str, str], source: str) -> None:
    for name, text in files.items():
        write(tmp_path, name, text)
    with pytest.raises(TemplateError, match="calls itself without end") as caught:
        render_source(tmp_path, source)
    assert caught.value.template is not None and caught.value.line is not None


def test_a_runaway_template_exits_with_status_2_and_its_line(tmp_path: Path) -> None:
    template = write(tmp_path, "note.md.j2", "# Note\n{% include 'note.md.j2' %}\n")
    result = runner.invoke(app, ["draft", str(SAMPLE), "--template", str(template)])
    assert result.exit_code == 2 and result.stdout == ""
    assert f"{template}, line 2" in result.stderr and "calls itself without end" in result.stderr


def test_the_timer_is_put_back_after_a_render(tmp_path: Path) -> None:
    import signal

    assert render_source(tmp_path, "{{ 1 + 1 }}") == "2"
    assert signal.getitimer(signal.ITIMER_REAL) == (0.0, 0.0)
    assert signal.getsignal(signal.SIGALRM) is signal.SIG_DFL
