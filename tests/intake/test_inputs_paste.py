"""Pasted lab text → case-file data. Every fixture is an invented scenario."""

from __future__ import annotations

from pathlib import Path

import pytest

from notegen.errors import PasteError
from notegen.intake.paste import parse_paste

FIXTURES = Path(__file__).resolve().parents[1] / "fixtures" / "inputs"


def read(name: str) -> str:
    return (FIXTURES / name).read_text(encoding="utf-8")


def test_headed_blocks_give_the_hand_written_case() -> None:
    parsed = parse_paste(read("paste_blocks.txt"))
    assert parsed.data == {
        "chem": {
            "na": {"value": 132, "unit": "mmol/L"},
            "k": {"value": 2.9},
            "cl": {"value": 88, "unit": "mmol/L"},
            "tco2": {"value": 36},
            "bun": {"value": 24, "unit": "mg/dL"},
            "creatinine": {"value": 1.42, "unit": "mg/dL"},
            "taken_at": "2024-03-01T06:10:00",
        },
        "gas": {
            "sample": "arterial",
            "ph": {"value": 7.52},
            "pco2": {"value": 48, "unit": "mmHg"},
            "hco3": {"value": 38},
            "po2": {"value": 82, "unit": "mmHg"},
            "taken_at": "2024-03-01T06:30:00",
        },
        "urine": {
            "cl": {"value": 10, "unit": "mmol/L", "qualifier": "<"},
            "na": {"value": 35, "unit": "mmol/L"},
            "k": {"value": 41, "unit": "mmol/L"},
            "taken_at": "2024-03-01T07:00:00",
        },
    }
    assert parsed.provenance["chem.k"] == "paste line 3"
    assert parsed.provenance["urine.cl"] == "paste line 17"
    assert parsed.unused == [
        "line 8: 'Hemoglobin 10.2 g/dL' is not an analyte this draft reads"
    ]


def test_time_columns_give_serial_chemistry_oldest_first() -> None:
    parsed = parse_paste(read("paste_columns.txt"))
    assert parsed.data == {
        "chem": [
            {"na": {"value": 134}, "k": {"value": 2.8}, "cl": {"value": 86}, "tco2": {"value": 38},
             "creatinine": {"value": 1.6}, "albumin": {"value": 3.1}, "taken_at": "2024-03-01T06:00:00"},
            {"na": {"value": 137}, "k": {"value": 3.6}, "cl": {"value": 95}, "tco2": {"value": 31},
             "creatinine": {"value": 1.3}, "taken_at": "2024-03-02T06:00:00"},
        ]
    }
    assert parsed.provenance["chem[1].k"] == "paste line 4"
    assert parsed.unused == []


def test_time_lines_give_serial_venous_gases() -> None:
    parsed = parse_paste(read("paste_serial.txt"))
    assert parsed.data == {
        "gas": [
            {"sample": "venous", "ph": {"value": 7.49}, "pco2": {"value": 50, "unit": "mmHg"},
             "hco3": {"value": 37, "unit": "mmol/L"}, "taken_at": "2024-03-01T06:00:00"},
            {"sample": "venous", "ph": {"value": 7.45}, "pco2": {"value": 47, "unit": "mmHg"},
             "hco3": {"value": 32, "unit": "mmol/L"}, "taken_at": "2024-03-02T06:00:00"},
        ]
    }


def test_ambiguous_lines_are_listed_never_guessed() -> None:
    parsed = parse_paste(read("paste_ambiguous.txt"))
    assert parsed.data == {"chem": {"bun": {"value": 18, "unit": "mg/dL"}},
                           "urine": {"creatinine": {"value": 80, "unit": "mg/dL"}}}
    reasons = "\n".join(parsed.unused)
    assert "line 1: 'Chloride 12' could be serum or urine chloride" in reasons
    assert "line 2: 'Sodium 20' could be serum or urine sodium" in reasons
    assert "line 4: 'Potassium 2.9 mmol/L 3.1 mmol/L' has 2 values and no time columns" in reasons
    assert "line 5: 'Sodium 132 mmol/L 140 mg/dL' gives two different units" in reasons
    assert "line 6: 'Glucose Negative' has no numeric value" in reasons
    assert len(parsed.unused) == 5


def test_bare_electrolytes_beside_a_serum_only_value_are_serum() -> None:
    # Documented rule: no heading, no urine anywhere, and the block holds a chem-only value (BUN).
    parsed = parse_paste("Chloride 98\nSodium 140\nBUN 18")
    assert parsed.data == {"chem": {"cl": {"value": 98}, "na": {"value": 140}, "bun": {"value": 18}}}


def test_a_lone_potassium_is_not_guessed() -> None:
    with pytest.raises(PasteError, match="could be chem or urine potassium"):
        parse_paste("K 2.9 L")


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("BMP\nK 2.9 L", {"chem": {"k": {"value": 2.9}}}),
        ("BMP\nK: 2.9 (3.5-5.1) LL", {"chem": {"k": {"value": 2.9}}}),
        ("BMP\nPotassium 2.9 mmol/L [ref 3.5 - 5.1] critical", {"chem": {"k": {"value": 2.9, "unit": "mmol/L"}}}),
        ("BMP\nCreatinine 130 µmol/L H", {"chem": {"creatinine": {"value": 130, "unit": "µmol/L"}}}),
        ("VBG\npCO2 6.4 kPa", {"gas": {"sample": "venous", "pco2": {"value": 6.4, "unit": "kPa"}}}),
        ("PaCO2 48", {"gas": {"sample": "arterial", "pco2": {"value": 48}}}),
        ("UNa 12 mEq/L", {"urine": {"na": {"value": 12, "unit": "mEq/L"}}}),
        ("U-Cl >110", {"urine": {"cl": {"value": 110, "qualifier": ">"}}}),
        ("Ca++ 1.05 mmol/L", {"chem": {"ionized_ca": {"value": 1.05, "unit": "mmol/L"}}}),
        ("ABG\nLactate 2.1", {"chem": {"lactate": {"value": 2.1}}}),
        ("Sodium, serum 131", {"chem": {"na": {"value": 131}}}),
        # Mixed-up unit: passed on as written so the case validation can name it (130 mg/dL is not plausible).
        ("BMP\nCreatinine 130 mg/dL", {"chem": {"creatinine": {"value": 130, "unit": "mg/dL"}}}),
    ],
    ids=["abbreviation-flag", "colon-range-flag", "bracket-range-word-flag", "si-unit-as-written",
         "venous-heading-kpa", "name-fixes-arterial", "compact-urine-name", "urine-marker-qualifier",
         "ionized-calcium", "lactate-under-gas-heading", "serum-marker", "mixed-up-unit-kept"],
)
def test_line_layouts(text: str, expected: dict[str, object]) -> None:
    assert parse_paste(text).data == expected


def test_time_on_an_analyte_line() -> None:
    parsed = parse_paste("Serum sodium 136 mmol/L 05/03/2024 08:00\nSerum sodium 139 mmol/L 2024-03-06 08:00\n"
                         .replace("05/03/2024", "25/03/2024"))
    assert parsed.data == {"chem": [
        {"na": {"value": 139, "unit": "mmol/L"}, "taken_at": "2024-03-06T08:00:00"},
        {"na": {"value": 136, "unit": "mmol/L"}, "taken_at": "2024-03-25T08:00:00"},
    ]}


def test_duplicate_analyte_at_one_time_names_both_lines() -> None:
    with pytest.raises(PasteError) as caught:
        parse_paste(read("paste_duplicate.txt"))
    message = str(caught.value)
    assert message.startswith("paste, line 3: chem.k is given twice")
    assert "paste line 3" in message and "paste line 5" in message


def test_same_value_twice_is_used_once_and_listed() -> None:
    parsed = parse_paste("BMP\nK 2.9\nCO2 30\nK 2.9")
    assert parsed.data == {"chem": {"k": {"value": 2.9}, "tco2": {"value": 30}}}
    assert parsed.unused == ["paste line 4: same chem.k value as paste line 2; used once"]


def test_garbage_paste_is_a_clear_error_naming_the_lines() -> None:
    with pytest.raises(PasteError) as caught:
        parse_paste(read("paste_garbage.txt"), source="labs.txt")
    message = str(caught.value)
    assert message.startswith("labs.txt: no lab value notegen can use was found")
    assert "line 2: 'Hemoglobin 10.2' is not an analyte this draft reads" in message


def test_empty_paste() -> None:
    with pytest.raises(PasteError, match="the paste is empty"):
        parse_paste("   \n\n")


@pytest.mark.parametrize(
    ("text", "message", "line"),
    [
        ("03/04/2024 08:00\nBMP\nK 2.9\nBMP 04/03/2024 09:00\nK 3.0", "could be day/month or month/day", 1),
        ("BMP 03/04 08:00\nK 2.9", "date without a year", 1),
        ("BMP\nK 2.9\n08:00\nK 3.0", "time without a date", 3),
        ("2024-02-30 08:00\nBMP\nK 2.9", "not a valid date", 1),
    ],
    ids=["day-month-ambiguous", "no-year", "no-date", "impossible-date"],
)
def test_times_that_cannot_be_read_safely(text: str, message: str, line: int) -> None:
    with pytest.raises(PasteError, match=message) as caught:
        parse_paste(text)
    assert caught.value.line == line


def test_untimed_values_among_serial_ones_are_refused() -> None:
    with pytest.raises(PasteError, match="has no time"):
        parse_paste("BMP 2024-03-01 06:00\nK 2.9\nBMP 2024-03-02 06:00\nK 3.2\nBMP\nK 3.9")


def test_column_row_with_missing_cells_is_listed() -> None:
    parsed = parse_paste("BMP\nTest 2024-03-01 06:00 2024-03-02 06:00\nK 2.9 3.4\nCO2 36")
    assert parsed.data == {"chem": [{"k": {"value": 2.9}, "taken_at": "2024-03-01T06:00:00"},
                                    {"k": {"value": 3.4}, "taken_at": "2024-03-02T06:00:00"}]}
    assert parsed.unused == ["line 4: 'CO2 36' has 1 value(s) for 2 time columns; cannot tell which value "
                             "belongs to which time"]


def test_an_unplaced_ph_line_is_named_as_a_clinician_writes_it() -> None:
    parsed = parse_paste("pH 7.47\nUrine Cl 45\n")
    assert parsed.unused == [
        "line 1: 'pH 7.47' could be blood or urine pH: the paste holds urine values and this line has no "
        "URINE heading or 'urine' in its name"
    ]


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("Chemistry\nBeta-hydroxybutyrate 5.2 mmol/L", {"chem": {"bhb": {"value": 5.2, "unit": "mmol/L"}}}),
        ("BHB 4.8", {"chem": {"bhb": {"value": 4.8}}}),
        ("Salicylate level 42 mg/dL", {"chem": {"salicylate": {"value": 42, "unit": "mg/dL"}}}),
        ("Urine ketones 80 mg/dL", {"urine": {"ketones": {"value": 80, "unit": "mg/dL"}}}),
        ("UUN 650 mg/dL", {"urine": {"urea_nitrogen": {"value": 650, "unit": "mg/dL"}}}),
    ],
    ids=["beta-hydroxybutyrate", "bhb", "salicylate", "urine-ketones", "urine-urea-nitrogen"],
)
def test_acidosis_work_up_analytes(text: str, expected: dict[str, object]) -> None:
    assert parse_paste(text).data == expected


@pytest.mark.parametrize("text", ["BMP\nKetones 3.2", "ABG\nUNa 12"])
def test_a_urine_only_name_under_a_blood_heading_is_refused_not_a_crash(text: str) -> None:
    # Before the fix, the heading left no section for the line and the reader stopped with a
    # StopIteration (exit 1, "anything unforeseen"). Serum ketones are not urine ketones: never guessed.
    with pytest.raises(PasteError, match="give it a URINE heading or 'urine' in its name"):
        parse_paste(text)


def test_a_urine_only_name_under_a_blood_heading_beside_usable_values_is_listed_as_not_used() -> None:
    parsed = parse_paste("BMP\nNa 138\nKetones 3.2")
    assert parsed.data == {"chem": {"na": {"value": 138}}}
    assert any("Ketones 3.2" in line and "URINE heading" in line for line in parsed.unused)


def test_ketones_without_a_urine_heading_or_word_are_not_guessed() -> None:
    # "Ketones 3.2 mmol/L" may be a serum result; read as urine it would become 33 mg/dL of acetoacetate.
    with pytest.raises(PasteError, match="could be blood or urine ketones"):
        parse_paste("Ketones 3.2 mmol/L")
    assert parse_paste("URINE\nKetones 40 mg/dL").data == {"urine": {"ketones": {"value": 40, "unit": "mg/dL"}}}
