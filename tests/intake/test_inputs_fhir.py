"""FHIR R4 JSON → case-file data. Bundles are invented scenarios.

LOINC meanings used here: each code's `checked` note in rules/vocabulary/loinc.yaml says where
its meaning was seen (LOINC term-page copies on healthassure.in for 2744-1, 2703-7, 1959-6;
public code tables and FHIR resources for the others) or says "from memory" (17862-4, 85354-9,
8480-6, 8462-4). test_every_code_says_where_it_was_checked keeps that note present.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path
from typing import Any

import pytest

from notegen.errors import InputError
from notegen.intake.fhir import looks_like_fhir, read_fhir
from notegen.knowledge import shipped_knowledge

FIXTURES = Path(__file__).resolve().parents[1] / "fixtures" / "inputs"


def load(name: str) -> dict[str, Any]:
    data: dict[str, Any] = json.loads((FIXTURES / name).read_text(encoding="utf-8"))
    return data


def observation(code: str, value: float, unit: str, when: str = "2024-03-01T06:00:00Z", **extra: Any) -> dict[str, Any]:
    resource: dict[str, Any] = {
        "resourceType": "Observation", "id": f"o-{code}", "status": "final",
        "code": {"coding": [{"system": "http://loinc.org", "code": code}]},
        "effectiveDateTime": when,
        "valueQuantity": {"value": value, "unit": unit, "system": "http://unitsofmeasure.org", "code": unit},
    }
    resource.update(extra)
    return resource


def bundle(*resources: dict[str, Any], kind: str = "collection") -> dict[str, Any]:
    """A bundle of `resources`; a result or medication without a subject is given one patient's."""
    for resource in resources:
        if resource["resourceType"] in ("Observation", "MedicationStatement", "MedicationRequest"):
            resource.setdefault("subject", {"reference": "Patient/p"})
    return {"resourceType": "Bundle", "type": kind, "entry": [{"resource": r} for r in resources]}


def test_full_bundle_gives_the_hand_written_case() -> None:
    # LOINC: serum 2951-2 2823-3 2075-0 2028-9 2160-0 1751-7; arterial 2744-1 2019-8 1960-4 2703-7;
    # venous 2746-6 2021-4; urine 2078-4 2955-3 2828-2 2161-8 (sources in loinc.yaml `checked`).
    parsed = read_fhir(load("bundle_full.json"), source="bundle_full.json")
    assert parsed.data == {
        "chem": {
            "na": {"value": 132, "unit": "mmol/L"}, "k": {"value": 2.9, "unit": "mmol/L"},
            "cl": {"value": 88, "unit": "mmol/L"}, "tco2": {"value": 36, "unit": "mmol/L"},
            "creatinine": {"value": 1.42, "unit": "mg/dL"}, "albumin": {"value": 3.1, "unit": "g/dL"},
            "taken_at": "2024-03-01T06:10:00Z",
        },
        "gas": [
            {"sample": "venous", "ph": {"value": 7.49}, "pco2": {"value": 52, "unit": "mm[Hg]"},
             "taken_at": "2024-03-01T05:00:00Z"},
            {"sample": "arterial", "ph": {"value": 7.52}, "pco2": {"value": 48, "unit": "mm[Hg]"},
             "hco3": {"value": 38, "unit": "mmol/L"}, "po2": {"value": 82, "unit": "mm[Hg]"},
             "taken_at": "2024-03-01T06:30:00Z"},
        ],
        "urine": {
            "cl": {"value": 10, "unit": "mmol/L", "qualifier": "<"}, "na": {"value": 35, "unit": "mmol/L"},
            "k": {"value": 41, "unit": "mmol/L"}, "creatinine": {"value": 60, "unit": "mg/dL"},
            "taken_at": "2024-03-01T07:00:00Z",
        },
        # Age 66: born 1957-05-02, counted at the latest observation's date (2024-03-01).
        "patient": {"sex": "female", "age": 66, "weight_kg": 72},
        "context": {"meds": ["furosemide", "spironolactone"]},
    }
    assert parsed.provenance["chem.k"] == "FHIR Observation/obs-k"
    assert parsed.provenance["gas[1].ph"] == "FHIR Observation/obs-aph"
    assert "latest observation" in parsed.provenance["patient.age"]
    assert parsed.unused == [
        "FHIR Observation/obs-k-old: status 'cancelled' is not a usable result",
        "FHIR MedicationRequest/mr-2: Furosemide is already listed from MedicationStatement/ms-1",
    ]
    # Outside an acid-base assessment: counted in one line of the note, listed in the worksheet.
    assert parsed.outside == [
        ("Observation", "FHIR Observation/obs-hgb: LOINC 718-7 (Hemoglobin [Mass/volume] in Blood) is not read for "
         "an acid-base assessment"),
        ("Condition", "FHIR Condition/cond-1: a Condition is not read for an acid-base assessment"),
    ]


def test_single_observation() -> None:
    parsed = read_fhir(observation("2078-4", 8, "mmol/L"), source="obs.json")  # 2078-4: urine chloride
    assert parsed.data == {"urine": {"cl": {"value": 8, "unit": "mmol/L"}, "taken_at": "2024-03-01T06:00:00Z"}}


@pytest.mark.parametrize("kind", ["collection", "searchset", "transaction"])
def test_bundle_types_read(kind: str) -> None:
    parsed = read_fhir(bundle(observation("2823-3", 3.0, "mmol/L"), kind=kind), source="b.json")
    assert parsed.data["chem"]["k"] == {"value": 3.0, "unit": "mmol/L"}


def test_other_bundle_type_is_refused() -> None:
    with pytest.raises(InputError, match="Bundle type 'document' is not one notegen reads"):
        read_fhir(bundle(kind="document"), source="b.json")


def test_not_fhir_names_the_entry() -> None:
    with pytest.raises(InputError) as caught:
        read_fhir(load("bundle_not_fhir.json"), source="bundle_not_fhir.json")
    assert str(caught.value) == "bundle_not_fhir.json: entry[1] is not a FHIR resource (no resourceType)"


def test_invalid_fhir_names_the_entry_resource_and_field() -> None:
    with pytest.raises(InputError) as caught:
        read_fhir(load("bundle_invalid.json"), source="bundle_invalid.json")
    message = str(caught.value)
    assert message == (
        "bundle_invalid.json: entry[1] (Observation/obs-k) is not valid FHIR R4: "
        "valueQuantity.value: expected a decimal number (found 'lots')"
    )


def test_unknown_resource_type_is_refused() -> None:
    with pytest.raises(InputError, match=r"entry\[0\] has resourceType 'LabThing'"):
        read_fhir(bundle({"resourceType": "LabThing"}), source="b.json")


def test_r4_medication_statement_is_accepted() -> None:
    # R4's medicationCodeableConcept, which the R5 models refuse.
    statement = {"resourceType": "MedicationStatement", "id": "m", "status": "active",
                 "medicationCodeableConcept": {"text": "hydrochlorothiazide"}, "subject": {"reference": "Patient/p"}}
    parsed = read_fhir(bundle(statement), source="b.json")
    assert parsed.data == {"context": {"meds": ["hydrochlorothiazide"]}}


def test_duplicate_code_at_one_time_is_an_error() -> None:
    with pytest.raises(InputError, match="chem.k is given twice for the same time"):
        read_fhir(bundle(observation("2823-3", 2.9, "mmol/L"), observation("6298-4", 3.4, "mmol/L")), source="b")


def test_mixed_up_unit_is_passed_on_for_validation_to_name() -> None:
    # Creatinine 130 reported "mg/dL": not converted, not dropped; the case validation names it.
    parsed = read_fhir(bundle(observation("2160-0", 130, "mg/dL")), source="b.json")
    assert parsed.data["chem"]["creatinine"] == {"value": 130, "unit": "mg/dL"}
    assert parsed.provenance["chem.creatinine"] == "FHIR Observation/o-2160-0"


@pytest.mark.parametrize(
    ("resource", "reason"),
    [
        (observation("2823-3", 3.0, "mmol/L", valueQuantity=None, valueString="hemolysed"),
         "has valueString, not a valueQuantity"),
        (observation("2078-4", 10, "mmol/L", valueQuantity={"value": 10, "comparator": "<=", "unit": "mmol/L"}),
         "comparator '<=' cannot be held"),
        (observation("2823-3", 3.0, "mmol/L", effectiveDateTime="2024-03"), "is only partial"),
        (observation("29463-7", 160, "[lb_av]"), "this draft takes it in kg only"),
        ({"resourceType": "Observation", "id": "x", "status": "final",
          "code": {"coding": [{"system": "http://snomed.info/sct", "code": "123"}]}}, "has no LOINC code"),
    ],
    ids=["value-string", "le-comparator", "partial-date", "weight-in-pounds", "no-loinc"],
)
def test_unusable_observations_are_listed(resource: dict[str, Any], reason: str) -> None:
    resource = {k: v for k, v in resource.items() if v is not None}
    parsed = read_fhir(bundle(resource, observation("2951-2", 140, "mmol/L")), source="b.json")
    assert parsed.data["chem"]["na"] == {"value": 140, "unit": "mmol/L"}
    assert len(parsed.unused) == 1 and reason in parsed.unused[0], parsed.unused


def test_blood_pressure_panel_and_more_than_one_patient() -> None:
    panel = {"resourceType": "Observation", "id": "bp", "status": "final", "effectiveDateTime": "2024-03-01",
             "code": {"coding": [{"system": "http://loinc.org", "code": "85354-9"}]},
             "component": [
                 {"code": {"coding": [{"system": "http://loinc.org", "code": "8480-6"}]},
                  "valueQuantity": {"value": 168, "unit": "mm[Hg]"}},
                 {"code": {"coding": [{"system": "http://loinc.org", "code": "8462-4"}]},
                  "valueQuantity": {"value": 98, "unit": "mm[Hg]"}}]}
    assert read_fhir(bundle(panel), source="b").data == {"context": {"bp": "168/98"}}
    one = observation("2823-3", 3.0, "mmol/L", subject={"reference": "Patient/a"})
    two = observation("2951-2", 140, "mmol/L", subject={"reference": "Patient/b"})
    with pytest.raises(InputError, match="more than one patient"):
        read_fhir(bundle(one, two), source="b")


def test_looks_like_fhir() -> None:
    assert looks_like_fhir({"resourceType": "Bundle"})
    assert not looks_like_fhir({"chem": {"k": 2.9}})
    assert not looks_like_fhir([{"resourceType": "Bundle"}])


def test_every_code_says_where_it_was_checked() -> None:
    table = shipped_knowledge().loinc
    sections = {entry.field.split(".")[0] for entry in table.codes.values()}
    assert {"gas", "chem", "urine", "patient", "context"} <= sections
    for code, entry in table.codes.items():
        assert entry.checked.strip() and entry.name.strip(), code
    # Every gas field has an arterial, a venous and an unspecified-blood code.
    for field in ("gas.ph", "gas.pco2", "gas.hco3", "gas.po2"):
        samples = {e.sample for e in table.codes.values() if e.field == field}
        assert samples == {"arterial", "venous", None}, field


def test_importing_the_reader_does_not_import_fhir_resources() -> None:
    code = "import sys, notegen.intake.fhir, notegen.intake; print('fhir.resources' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True,
                         cwd=Path(__file__).resolve().parents[2])
    assert out.stdout.strip() == "False"


def test_every_lab_field_has_a_code() -> None:
    from notegen.case.model import Chem, Gas, Urine

    fields = {entry.field for entry in shipped_knowledge().loinc.codes.values()}
    for section, model in (("gas", Gas), ("chem", Chem), ("urine", Urine)):
        for name in model.model_fields:
            if name not in ("sample", "taken_at"):
                assert f"{section}.{name}" in fields, f"{section}.{name}"


@pytest.mark.parametrize(
    ("code", "value", "unit", "section", "field"),
    [
        ("53060-9", 4.2, "mmol/L", "chem", "bhb"),
        ("4024-6", 35, "mg/dL", "chem", "salicylate"),
        ("5797-6", 80, "mg/dL", "urine", "ketones"),
        ("3095-7", 700, "mg/dL", "urine", "urea_nitrogen"),
    ],
)
def test_acidosis_work_up_codes(code: str, value: float, unit: str, section: str, field: str) -> None:
    parsed = read_fhir(observation(code, value, unit), source="obs.json")
    assert parsed.data[section][field] == {"value": value, "unit": unit}


def test_the_table_cites_the_loinc_standard_not_a_commercial_site() -> None:
    from notegen.resources import rules_dir

    text = (rules_dir() / "vocabulary" / "loinc.yaml").read_text(encoding="utf-8")
    assert "loinc.org" in text and "Regenstrief" in text
    assert "healthassure" not in text
