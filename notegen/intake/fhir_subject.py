"""One patient per FHIR bundle: every result and medication must name the bundle's patient.

A bundle's Observations, MedicationStatements and MedicationRequests are merged into one
note, so each must be proven to be the same person's: it must carry `subject.reference`,
and that reference must resolve to the bundle's single Patient (`Patient/<id>`, or the
Patient entry's `fullUrl`). A subject given only by identifier or display text cannot be
proven to be that Patient, and is refused. A bundle with no Patient is read when every
subject is the same reference, with a notice that the patient is known only by it.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from typing import Any

from notegen.errors import InputError

SUBJECT_TYPES = ("Observation", "MedicationStatement", "MedicationRequest")


def _label(resource: Mapping[str, Any]) -> str:
    kind = resource.get("resourceType", "resource")
    ident = resource.get("id")
    return f"{kind}/{ident}" if ident else f"{kind} (no id)"


def _patient_names(where: str, patient: Mapping[str, Any], full_urls: Mapping[str, str]) -> set[str]:
    names = {url for url, url_where in full_urls.items() if url_where == where}
    if isinstance(patient.get("id"), str):
        names.add(f"Patient/{patient['id']}")
    return names


def _reference(resource: Mapping[str, Any], where: str, fail: Callable[[str], InputError]) -> str:
    """The resource's subject reference; refuses a missing subject and one named only by identifier or display."""
    named = f"{_label(resource)} ({where})"
    subject = resource.get("subject")
    if not isinstance(subject, Mapping) or not subject:
        raise fail(f"{named} has no subject: in a bundle every result and medication must name its patient "
                   "(subject.reference), or it could be another patient's")
    reference = subject.get("reference")
    if not isinstance(reference, str) or not reference.strip():
        only = " and ".join(key for key in ("identifier", "display") if key in subject) or "an empty subject"
        raise fail(f"{named} names its patient only by {only}, which cannot prove it is the same patient; "
                   "give subject.reference to the bundle's Patient")
    kind = reference.split("/")[-2] if reference.count("/") >= 1 and not reference.startswith("urn:") else None
    if kind is not None and kind != "Patient":
        raise fail(f"{named} has subject {reference!r}, a {kind} rather than one patient")
    return reference


def check_one_patient(
    resources: Sequence[tuple[str, Mapping[str, Any]]],
    full_urls: Mapping[str, str],
    fail: Callable[[str], InputError],
) -> str | None:
    """Refuse a bundle that may hold more than one patient's data; return a notice, or None.

    `resources` are (entry place, resource) pairs, `full_urls` maps each entry's fullUrl to
    its place. The notice is returned when the bundle holds no Patient and its resources
    share one subject reference.
    """
    patients = [(where, resource) for where, resource in resources if resource.get("resourceType") == "Patient"]
    if len(patients) > 1:
        raise fail("the bundle holds more than one Patient: " + ", ".join(_label(p) for _, p in patients))
    names = _patient_names(*patients[0], full_urls) if patients else set()
    seen: dict[str, str] = {}
    for where, resource in resources:
        if resource.get("resourceType") not in SUBJECT_TYPES:
            continue
        reference = _reference(resource, where, fail)
        if patients and reference not in names:
            raise fail(f"{_label(resource)} ({where}) is for {reference}, not for the bundle's Patient "
                       f"({_label(patients[0][1])}); a note holds one patient's data")
        seen.setdefault(reference, _label(resource))
    if len(seen) > 1:
        listed = ", ".join(f"{ref} ({label})" for ref, label in list(seen.items())[:3])
        raise fail(f"the results belong to more than one patient: {listed}")
    if not patients and seen:
        reference = next(iter(seen))
        return (f"the FHIR bundle holds no Patient resource; every result names {reference}, so age and sex "
                "were not taken from it: check that these results are this patient's")
    return None
