"""FHIR values are never given a unit or a value they do not state. Invented resources."""

from __future__ import annotations

from datetime import UTC, datetime, timedelta, timezone
from typing import Any

import pytest

from notegen.case.trend import TrendPoint, TrendSeries
from notegen.errors import InputError
from notegen.intake.fhir import read_fhir
from notegen.note.worksheet import trend_row


def _observation(quantity: dict[str, Any], **extra: Any) -> dict[str, Any]:
    resource: dict[str, Any] = {
        "resourceType": "Observation", "id": "o-k", "status": "final",
        "code": {"coding": [{"system": "http://loinc.org", "code": "2823-3"}]},
        "effectiveDateTime": "2026-03-14T06:00:00Z", "valueQuantity": quantity,
        "subject": {"reference": "Patient/p1"},
    }
    resource.update(extra)
    patient = {"resourceType": "Patient", "id": "p1", "gender": "female", "birthDate": "1960-01-01"}
    return {"resourceType": "Bundle", "type": "collection", "entry": [{"resource": patient}, {"resource": resource}]}


def test_a_value_quantity_without_a_unit_is_refused() -> None:
    # Before: the value was passed on without a unit and read in the case's default unit.
    with pytest.raises(InputError) as info:
        read_fhir(_observation({"value": 3.1}), source="b.json")
    assert str(info.value) == (
        "b.json: FHIR Observation/o-k: LOINC 2823-3 valueQuantity 3.1 has no unit (neither code nor unit); "
        "notegen does not assume one: give the unit in the resource"
    )


def test_a_value_beside_a_data_absent_reason_is_refused() -> None:
    absent = {"coding": [{"system": "http://terminology.hl7.org/CodeSystem/data-absent-reason", "code": "error"}]}
    with pytest.raises(InputError, match=r"both a value and a dataAbsentReason, which FHIR R4 forbids \(obs-6\)"):
        read_fhir(_observation({"value": 3.1, "unit": "mmol/L"}, dataAbsentReason=absent), source="b.json")


def test_trend_times_from_different_offsets_show_their_offsets() -> None:
    # 23:30 at UTC+02:00 is 21:30 UTC, before 22:00 UTC: without offsets the order shown looks reversed.
    east = timezone(timedelta(hours=2))
    series = TrendSeries(field="chem.k", label="Potassium", unit="mmol/L", points=(
        TrendPoint(taken_at=datetime(2026, 3, 14, 23, 30, tzinfo=east), value=3.1),
        TrendPoint(taken_at=datetime(2026, 3, 14, 22, 0, tzinfo=UTC), value=3.4),
    ))
    assert trend_row(series)["text"] == "3.1 (2026-03-14 23:30 +02:00) \u2192 3.4 (22:00 UTC) mmol/L"
