"""Plain text derived from the Markdown note: exact layouts, wrapping, ASCII folding."""

from __future__ import annotations

import subprocess
import sys

import pytest
from hypothesis import given
from hypothesis import strategies as st

from notegen.render import escape_markdown, fold_to_ascii, markdown_to_text


def lines_of(text: str) -> list[str]:
    assert text.endswith("\n") and not text.endswith("\n\n")
    return text[:-1].split("\n")


def test_headings_are_plain_lines() -> None:
    source = "# Acid-base note\n\n## Data used\n\n### Next tests\n\n#### Why now?\n\nBody.\n"
    assert markdown_to_text(source) == (
        "ACID-BASE NOTE\n\nDATA USED\n\nNext tests:\n\nWhy now?\n\nBody.\n"
    )


def test_a_heading_that_holds_a_colon_gets_no_second_one() -> None:
    assert markdown_to_text("### Gastric acid loss: likely\n\nBody.\n") == "Gastric acid loss: likely\n\nBody.\n"


def test_inline_markup_leaves_no_markdown_symbols() -> None:
    source = (
        "Some **bold**, *em*, `code`, \\*starred\\*, &amp; a [link](https://example.org/x) "
        "and <https://example.org>.\n"
    )
    assert markdown_to_text(source, width=200) == (
        "Some bold, em, code, *starred*, & a link (https://example.org/x) and https://example.org.\n"
    )


@pytest.mark.parametrize(
    ("width", "expected"),
    [
        (
            40,
            [
                "The anion gap is 12 mmol/L and the delta",
                "ratio does not apply because bicarbonate",
                "is above 24 mmol/L, so no hidden",
                "metabolic acidosis is suggested.",
            ],
        ),
        (
            72,
            [
                "The anion gap is 12 mmol/L and the delta ratio does not apply because",
                "bicarbonate is above 24 mmol/L, so no hidden metabolic acidosis is",
                "suggested.",
            ],
        ),
    ],
    ids=["width-40", "width-72"],
)
def test_paragraph_wraps_at_width(width: int, expected: list[str]) -> None:
    source = (
        "The anion gap is **12 mmol/L** and the delta ratio does not apply\n"
        "because bicarbonate is above 24 mmol/L, so no hidden metabolic acidosis is suggested.\n"
    )
    out = lines_of(markdown_to_text(source, width=width))
    assert out == expected
    assert all(len(line) <= width for line in out)


def test_no_break_space_keeps_number_with_unit_and_prints_as_space() -> None:
    # "24" would end the first line if the no-break space were an ordinary one.
    source = "The bicarbonate was well above the usual 24\u00a0mmol/L.\n"
    assert markdown_to_text(source, width=44) == "The bicarbonate was well above the usual\n24 mmol/L.\n"


def test_hard_break_starts_a_new_line() -> None:
    assert markdown_to_text("first line\\\nsecond line\n") == "first line\nsecond line\n"


def test_tight_and_nested_lists_with_hanging_markers() -> None:
    source = "- alpha\n- beta\n  - beta one\n  - beta two\n    1. deep\n- gamma\n\n9. ninth\n10. tenth\n"
    assert markdown_to_text(source, width=40) == (
        "- alpha\n"
        "- beta\n"
        "  - beta one\n"
        "  - beta two\n"
        "    1. deep\n"
        "- gamma\n"
        "\n"
        "9.  ninth\n"
        "10. tenth\n"
    )


def test_loose_list_keeps_its_blank_lines() -> None:
    source = "- first\n\n- second\n\n  more about second\n"
    assert markdown_to_text(source) == "- first\n\n- second\n\n  more about second\n"


def test_list_item_wraps_with_hanging_indent() -> None:
    source = "- The expected PaCO2 for this bicarbonate is 46 to 50 mmHg by the 0.7 rule.\n"
    assert markdown_to_text(source, width=40) == (
        "- The expected PaCO2 for this\n  bicarbonate is 46 to 50 mmHg by the\n  0.7 rule.\n"
    )


def test_table_columns_follow_alignment() -> None:
    source = "| Item | Value | Flag |\n|:--|--:|:-:|\n| Sodium | 138 | |\n| Potassium | 2.9 | low |\n"
    assert markdown_to_text(source, width=40) == (
        "Item       Value  Flag\n"
        "---------  -----  ----\n"
        "Sodium       138\n"
        "Potassium    2.9  low\n"
    )


def test_centred_column() -> None:
    source = "| Left | Mid |\n|---|:---:|\n| a | b |\n| long cell | ccccccc |\n"
    assert markdown_to_text(source) == (
        "Left         Mid\n"
        "---------  -------\n"
        "a             b\n"
        "long cell  ccccccc\n"
    )


def test_table_wider_than_width_wraps_cells_and_parts_rows() -> None:
    source = (
        "| Finding | For | Against |\n|---|---|---|\n"
        "| Vomiting or gastric drainage | urine chloride below 20 mmol/L "
        "| no history of vomiting reported |\n"
        "| Diuretic use | thiazide listed | urine chloride high |\n"
    )
    out = markdown_to_text(source, width=40)
    assert out == (
        "Finding       For           Against\n"
        "------------  ------------  ------------\n"
        "Vomiting or   urine         no history\n"
        "gastric       chloride      of vomiting\n"
        "drainage      below 20      reported\n"
        "              mmol/L\n"
        "\n"
        "Diuretic use  thiazide      urine\n"
        "              listed        chloride\n"
        "                            high\n"
    )
    assert max(len(line) for line in lines_of(out)) <= 40


def test_table_fits_unchanged_at_72() -> None:
    source = (
        "| Finding | For | Against |\n|---|---|---|\n"
        "| Diuretic use | thiazide listed | urine chloride high |\n"
    )
    assert markdown_to_text(source, width=72) == (
        "Finding       For              Against\n"
        "------------  ---------------  -------------------\n"
        "Diuretic use  thiazide listed  urine chloride high\n"
    )


def test_table_too_wide_for_any_layout_overflows_rather_than_losing_text() -> None:
    header = "| " + " | ".join(f"column{i}" for i in range(6)) + " |\n"
    rule = "|" + "---|" * 6 + "\n"
    row = "| " + " | ".join(f"value{i}" for i in range(6)) + " |\n"
    out = markdown_to_text(header + rule + row, width=20)
    words = out.split()
    assert [f"column{i}" for i in range(6)] == [w for w in words if w.startswith("column")]
    assert [f"value{i}" for i in range(6)] == [w for w in words if w.startswith("value")]


def test_blockquote_code_and_thematic_break() -> None:
    source = (
        "Before\n\n> quoted text that is long enough to need wrapping at forty chars\n\n---\n\n"
        "After `code span` here\n\n"
        "```\nraw   code line that is much longer than forty characters and stays\n```\n"
    )
    assert markdown_to_text(source, width=40) == (
        "Before\n"
        "\n"
        "    quoted text that is long enough to\n"
        "    need wrapping at forty chars\n"
        "\n"
        "\n"
        "After code span here\n"
        "\n"
        "    raw   code line that is much longer than forty characters and stays\n"
    )


def test_ends_with_exactly_one_newline() -> None:
    assert markdown_to_text("") == "\n"
    assert markdown_to_text("text\n\n\n---\n\n") == "text\n"
    assert markdown_to_text("# Only\n") == "ONLY\n"


def test_too_narrow_width_is_refused() -> None:
    with pytest.raises(ValueError, match="at least 20"):
        markdown_to_text("x", width=19)


def test_ascii_folding_of_clinical_signs() -> None:
    source = (
        "HCO\u2083\u207b 38 mmol/L \u2265 26; creatinine 130 \u00b5mol/L; pH 7.50\u20137.55 "
        "\u2192 alkalemia \u2014 check; 0.7 \u00d7 14 \u00b1 2; 1.73 m\u00b2; "
        "\u201cquoted\u201d \u2018single\u2019; Kussmaul\u2019s; na\u00efve; \u2264 5; 37 \u00b0C; \u6f22\n"
    )
    out = markdown_to_text(source, width=200, ascii_only=True)
    assert out == (
        "HCO3- 38 mmol/L >= 26; creatinine 130 umol/L; pH 7.50-7.55 -> alkalemia -- check; "
        "0.7 x 14 +/- 2; 1.73 m2; \"quoted\" 'single'; Kussmaul's; naive; <= 5; 37 degC; ?\n"
    )
    assert out.isascii()


def test_ascii_folding_happens_before_wrapping() -> None:
    # Each "\u2265" becomes two characters; lines must still fit the width.
    source = "value \u2265 " * 30 + "\n"
    out = markdown_to_text(source, width=30, ascii_only=True)
    assert out.isascii()
    assert all(len(line) <= 30 for line in lines_of(out))


def test_without_ascii_only_unicode_is_kept() -> None:
    assert markdown_to_text("130 \u00b5mol/L \u2265 x\n") == "130 \u00b5mol/L \u2265 x\n"


def test_fold_to_ascii_keeps_no_break_space_for_the_wrapper() -> None:
    assert fold_to_ascii("24\u00a0mmol/L \u202f\u00bd") == "24\u00a0mmol/L \u00a01/2"


def test_same_input_gives_same_output() -> None:
    source = "# T\n\n| a | b |\n|---|---|\n| 1 | 2 |\n\n- x\n- y\n"
    assert markdown_to_text(source, width=40) == markdown_to_text(source, width=40)


def test_no_markdown_symbols_survive_a_note_shaped_document() -> None:
    source = (
        "# Draft\n\n> **Critical values:** pH 7.62.\n\n## Assessment\n\n**Metabolic alkalosis** with "
        "*appropriate* compensation.\n\n| A | B |\n|---|--:|\n| x | 1 |\n\n1. one\n2. two\n"
    )
    out = markdown_to_text(source)
    for symbol in ("**", "#", "|", "\\", "> ", "`"):
        assert symbol not in out, symbol


printable_text = st.text(
    alphabet=st.characters(codec="ascii", categories=["L", "N", "P", "S", "Zs"]) | st.sampled_from("µ≥é→"),
    max_size=60,
)


def collapse(text: str) -> str:
    return " ".join(text.split())


@given(printable_text)
def test_escaped_user_text_prints_literally_in_a_paragraph(raw: str) -> None:
    expected = collapse(raw)
    out = markdown_to_text("Label: " + escape_markdown(raw), width=1000)
    assert out == f"Label: {expected}".rstrip() + "\n"


@given(printable_text)
def test_escaped_user_text_prints_literally_at_the_start_of_a_line(raw: str) -> None:
    expected = collapse(raw)
    assert markdown_to_text(escape_markdown(raw), width=1000) == expected + "\n"


@given(printable_text)
def test_escaped_user_text_stays_in_its_table_cell(raw: str) -> None:
    expected = collapse(raw)
    source = f"| Label | Value |\n|---|---|\n| {escape_markdown(raw)} | 7 |\n"
    out = lines_of(markdown_to_text(source, width=1000))
    width = max(len("Label"), len(expected))
    assert out[2] == expected.ljust(width) + "  7"


def test_importing_the_package_loads_no_parser_or_template_engine() -> None:
    code = (
        "import sys, notegen.render; "
        "print(sorted(m for m in sys.modules if m.startswith(('markdown_it', 'jinja2'))))"
    )
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert result.stdout.strip() == "[]"
