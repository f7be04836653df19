"""One patient per FHIR bundle: results and medications that may be another patient's are refused.

Every bundle here is invented. A bundle is merged into one note, so a result with no subject, a
subject named only by identifier or display, or a subject other than the bundle's Patient could
put one patient's value (K 6.8 and its alert, or a medication) into another patient's note.
"""

from __future__ import annotations

import copy
import re
from typing import Any

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from typer.testing import CliRunner

from notegen.cli.app import app
from notegen.errors import InputError
from notegen.intake.read import read_case_data

runner = CliRunner()
PATIENT = {"resourceType": "Patient", "id": "pt-a", "gender": "female", "birthDate": "1960-01-01"}
ME = {"reference": "Patient/pt-a"}


def observation(ident: str, code: str, value: float, unit: str, subject: dict[str, Any] | None) -> dict[str, Any]:
    resource: dict[str, Any] = {
        "resourceType": "Observation", "id": ident, "status": "final",
        "code": {"coding": [{"system": "http://loinc.org", "code": code}]},
        "effectiveDateTime": "2024-03-01T06:00:00Z",
        "valueQuantity": {"value": value, "unit": unit, "system": "http://unitsofmeasure.org", "code": unit},
    }
    if subject is not None:
        resource["subject"] = subject
    return resource


def medication(kind: str, ident: str, name: str, subject: dict[str, Any] | None) -> dict[str, Any]:
    resource: dict[str, Any] = {"resourceType": kind, "id": ident, "status": "active",
                                "medicationCodeableConcept": {"text": name}}
    if kind == "MedicationRequest":
        resource["intent"] = "order"
    if subject is not None:
        resource["subject"] = subject
    return resource


def bundle(*resources: dict[str, Any], urls: dict[int, str] | None = None) -> dict[str, Any]:
    entries = []
    for index, resource in enumerate(resources):
        entry: dict[str, Any] = {"resource": resource}
        if urls and index in urls:
            entry["fullUrl"] = urls[index]
        entries.append(entry)
    return {"resourceType": "Bundle", "type": "collection", "entry": entries}


def own_results() -> list[dict[str, Any]]:
    return [observation("na", "2951-2", 138, "mmol/L", ME), observation("cr", "2160-0", 1.1, "mg/dL", ME)]


def test_a_bundle_of_one_patient_is_read() -> None:
    case = read_case_data(bundle(PATIENT, *own_results(), medication("MedicationStatement", "ms", "furosemide", ME)))
    assert case.chem.na is not None and case.patient.sex == "female"
    assert not any("Patient resource" in notice for notice in case.notices)


def test_a_subject_by_full_url_resolves_to_the_patient() -> None:
    subject = {"reference": "urn:uuid:0b7e2a52-invented"}
    case = read_case_data(bundle(PATIENT, observation("k", "2823-3", 4.1, "mmol/L", subject),
                                 urls={0: "urn:uuid:0b7e2a52-invented"}))
    assert case.chem.k is not None


@pytest.mark.parametrize(
    ("stray", "message"),
    [
        (observation("k-stray", "2823-3", 6.8, "mmol/L", None), "Observation/k-stray (entry[3]) has no subject"),
        (observation("k", "2823-3", 4.0, "mmol/L", {"identifier": {"value": "000123"}}),
         "names its patient only by identifier"),
        (observation("k", "2823-3", 4.0, "mmol/L", {"display": "A. Invented"}), "names its patient only by display"),
        (observation("k", "2823-3", 4.0, "mmol/L", {"reference": "Patient/pt-b"}),
         "Observation/k (entry[3]) is for Patient/pt-b, not for the bundle's Patient (Patient/pt-a)"),
        (observation("k", "2823-3", 4.0, "mmol/L", {"reference": "Group/ward-4"}), "a Group rather than one patient"),
        (medication("MedicationStatement", "ms-b", "furosemide", {"reference": "Patient/pt-b"}),
         "MedicationStatement/ms-b (entry[3]) is for Patient/pt-b"),
        (medication("MedicationRequest", "mr-b", "spironolactone", {"reference": "Patient/pt-b"}),
         "MedicationRequest/mr-b (entry[3]) is for Patient/pt-b"),
        (medication("MedicationRequest", "mr-x", "spironolactone", None),
         "(MedicationRequest/mr-x) is not valid FHIR R4: subject: Field required"),
        ({**PATIENT, "id": "pt-b"}, "more than one Patient"),
    ],
    ids=["no-subject", "identifier-only", "display-only", "other-patient", "group", "statement-other",
         "request-other", "request-no-subject", "second-patient"],
)
def test_a_resource_that_may_be_another_patients_is_refused(stray: dict[str, Any], message: str) -> None:
    with pytest.raises(InputError, match=re.escape(message)):
        read_case_data(bundle(PATIENT, *own_results(), stray))


def test_the_patient_being_someone_else_is_refused() -> None:
    # Every result names Patient/pt-b, the Patient is pt-a: its age and sex would feed pt-b's eGFR.
    others = [observation(r["id"], r["code"]["coding"][0]["code"], r["valueQuantity"]["value"],
                          r["valueQuantity"]["unit"], {"reference": "Patient/pt-b"}) for r in own_results()]
    with pytest.raises(InputError, match="is for Patient/pt-b, not for the bundle's Patient"):
        read_case_data(bundle(PATIENT, *others))


def test_no_patient_but_one_subject_is_read_with_a_notice() -> None:
    case = read_case_data(bundle(*own_results()))
    assert case.chem.na is not None and case.patient.sex is None
    assert any("holds no Patient resource; every result names Patient/pt-a" in n for n in case.notices), case.notices


def test_no_patient_and_two_subjects_is_refused() -> None:
    with pytest.raises(InputError, match="more than one patient: Patient/pt-a"):
        read_case_data(bundle(*own_results(), observation("k", "2823-3", 4.0, "mmol/L", {"reference": "Patient/b"})))


def test_the_stray_hyperkalemia_never_reaches_a_note(tmp_path: Any) -> None:
    import json

    path = tmp_path / "ward.json"
    path.write_text(json.dumps(bundle(PATIENT, *own_results(), observation("k", "2823-3", 6.8, "mmol/L", None))))
    result = runner.invoke(app, ["draft", str(path)])
    assert result.exit_code == 2 and result.stdout == ""
    assert "Observation/k (entry[3]) has no subject" in result.stderr


# --- Property: every generated two-patient bundle is refused ---------------------------------------

_STRAY_SUBJECTS = st.sampled_from([
    None,
    {"identifier": {"system": "urn:example:mrn", "value": "000999"}},
    {"display": "B. Invented"},
    {"identifier": {"value": "000999"}, "display": "B. Invented"},
    {"reference": "Patient/pt-b"},
    {"reference": "urn:uuid:someone-else"},
    {"reference": "Patient/pt-a/_history/1"},
    {"reference": ""},
])
_STRAY_RESOURCES = st.one_of(
    st.builds(lambda s: observation("x", "2823-3", 6.8, "mmol/L", s), _STRAY_SUBJECTS),
    st.builds(lambda s: observation("x", "2075-0", 99, "mmol/L", s), _STRAY_SUBJECTS),
    st.builds(lambda s: medication("MedicationStatement", "x", "lisinopril", s), _STRAY_SUBJECTS),
    st.builds(lambda s: medication("MedicationRequest", "x", "acetazolamide", s), _STRAY_SUBJECTS),
    st.just({**PATIENT, "id": "pt-b", "gender": "male"}),
)


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(stray=_STRAY_RESOURCES, with_patient=st.booleans(), position=st.integers(min_value=0, max_value=3),
       data=st.data())
def test_every_two_patient_bundle_is_refused(stray: dict[str, Any], with_patient: bool, position: int,
                                             data: st.DataObject) -> None:
    resources = own_results()
    if with_patient:
        resources.insert(data.draw(st.integers(min_value=0, max_value=len(resources))), copy.deepcopy(PATIENT))
    if not with_patient and stray["resourceType"] == "Patient":
        stray = observation("x", "2823-3", 6.8, "mmol/L", {"reference": "Patient/pt-b"})
    resources.insert(min(position, len(resources)), copy.deepcopy(stray))
    with pytest.raises(InputError):
        read_case_data(bundle(*resources))
