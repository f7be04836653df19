"""Read FHIR R4 JSON: a Bundle (collection, searchset, transaction) or a single Observation.

Observations are read by LOINC code (rules/vocabulary/loinc.yaml); Patient gives sex and the
age at the latest observation's date; MedicationStatement and MedicationRequest give
context.meds. Each resource notegen reads is first checked with the fhir.resources models
for FHIR R4B (4.3): that package's top-level models are R5, which refuses R4's
`medicationCodeableConcept`, while R4B accepts R4 content for these resources. The library
is imported inside `read_fhir` only, so the ordinary case-file path stays fast.
Anything not used (unknown codes, other resource types, cancelled results) is listed in
`unused` with the reason.
"""

from __future__ import annotations

import importlib
from datetime import date, datetime
from typing import Any, Literal

from pydantic import ConfigDict, ValidationError

from notegen.errors import InputError
from notegen.intake.fhir_subject import check_one_patient
from notegen.intake.sections import ParsedInput, Reading, Section, as_utc, assemble_sections
from notegen.knowledge import shipped_knowledge
from notegen.knowledge.loinc import LoincTable

LOINC_SYSTEM = "http://loinc.org"
UCUM_SYSTEM = "http://unitsofmeasure.org"
BUNDLE_TYPES = ("collection", "searchset", "transaction")
_READ_TYPES = {"Observation", "Patient", "MedicationStatement", "MedicationRequest", "Medication"}
_USABLE_OBSERVATION = {"final", "amended", "corrected", "preliminary"}
_USABLE_STATEMENT = {"active", "completed", "intended", "on-hold", "unknown"}
_USABLE_REQUEST = {"active", "completed", "on-hold"}
_UNITLESS = {"", "1", "[pH]", "pH"}  # how a pH's "unit" is written; a pH has none
_STRICT = ConfigDict(frozen=True, extra="forbid")


def _plain_problem(error: Any) -> str:
    """One validation problem in words: the field, what was found, what was expected."""
    where = ".".join(str(p) for p in error["loc"]) or "(top)"
    message = str(error["msg"]).removeprefix("Value error, ")
    if "Decimal value string does not match" in message or error.get("type") == "decimal_parsing":
        message = "expected a decimal number"
    found = error.get("input")
    shown = f" (found {str(found)[:40]!r})" if isinstance(found, str | int | float) else ""
    return f"{where}: {message}{shown}"


def looks_like_fhir(data: object) -> bool:
    """True when `data` is a JSON object carrying a FHIR `resourceType`."""
    return isinstance(data, dict) and isinstance(data.get("resourceType"), str)


def read_fhir(data: dict[str, Any], *, source: str) -> ParsedInput:
    """Read a FHIR R4 Bundle or Observation into case-file sections.

    Raises InputError naming the entry index and resource when the content is not FHIR or
    fails the FHIR model check, when the bundle type is not one notegen reads, or when the
    observations belong to more than one patient.
    """
    try:
        r4b = importlib.import_module("fhir.resources.R4B")
    except ModuleNotFoundError:
        raise InputError(
            f"{source}: reading FHIR needs the fhir.resources package, which is not installed "
            "(pip install fhir.resources, or reinstall notegen)"
        ) from None
    return _FhirReader(r4b, shipped_knowledge().loinc, source).read(data)


class _FhirReader:
    def __init__(self, r4b: Any, table: LoincTable, source: str) -> None:
        self.r4b = r4b
        self.table = table
        self.source = source
        self.unused: list[str] = []
        self.outside: list[tuple[str, str]] = []
        self.provenance: dict[str, str] = {}
        self.notices: list[str] = []

    def fail(self, message: str) -> InputError:
        return InputError(f"{self.source}: {message}")

    # -- structure ------------------------------------------------------------------
    def read(self, data: dict[str, Any]) -> ParsedInput:
        if not looks_like_fhir(data):
            raise self.fail("not FHIR JSON: there is no resourceType at the top")
        kind = data["resourceType"]
        resources: list[tuple[str, dict[str, Any]]] = []
        full_urls: dict[str, str] = {}
        if kind == "Bundle":
            bundle_type = data.get("type")
            if bundle_type not in BUNDLE_TYPES:
                raise self.fail(f"Bundle type {bundle_type!r} is not one notegen reads "
                                f"(it reads {', '.join(BUNDLE_TYPES)})")
            entries = data.get("entry", [])
            if not isinstance(entries, list):
                raise self.fail("Bundle.entry is not a list")
            shell_entries: list[Any] = []
            for index, entry in enumerate(entries):
                where = f"entry[{index}]"
                if not isinstance(entry, dict):
                    raise self.fail(f"{where} is not a JSON object")
                shell_entries.append({k: v for k, v in entry.items() if k != "resource"})
                resource = entry.get("resource")
                if resource is None:
                    request = entry.get("request") or {}
                    self.unused.append(f"{where}: holds no resource ({request.get('method', '')} "
                                       f"{request.get('url', '')})".replace(" )", ")"))
                    continue
                self._check(resource, where)
                resources.append((where, resource))
                if isinstance(entry.get("fullUrl"), str):
                    full_urls[entry["fullUrl"]] = where
            shell = {k: v for k, v in data.items() if k != "entry"}
            if shell_entries:
                shell["entry"] = shell_entries
            self._validate(shell, "the Bundle")
            notice = check_one_patient(resources, full_urls, self.fail)  # one patient per note
            if notice is not None:
                self.notices.append(notice)
        elif kind == "Observation":
            self._check(data, "the file")
            resources.append(("the file", data))
        else:
            self._check(data, "the file")
            raise self.fail(f"a single FHIR {kind} is not something notegen reads; give a Bundle or an "
                            "Observation")
        return self._read_resources(resources, full_urls)

    def _check(self, resource: object, where: str) -> None:
        if not isinstance(resource, dict) or not isinstance(resource.get("resourceType"), str):
            raise self.fail(f"{where} is not a FHIR resource (no resourceType)")
        kind = resource["resourceType"]
        try:
            self.r4b.get_fhir_model_class(kind)
        except (ValueError, KeyError) as exc:
            raise self.fail(f"{where} has resourceType {kind!r}, which is not a FHIR R4 resource") from exc
        if kind in _READ_TYPES:
            self._validate(resource, f"{where} ({_label(resource)})")

    def _validate(self, resource: dict[str, Any], where: str) -> None:
        model = self.r4b.get_fhir_model_class(resource["resourceType"])
        try:
            model.model_validate(resource)
        except ValidationError as exc:
            problems = "; ".join(_plain_problem(err) for err in exc.errors()[:3])
            more = f" (and {len(exc.errors()) - 3} more)" if len(exc.errors()) > 3 else ""
            raise self.fail(f"{where} is not valid FHIR R4: {problems}{more}") from exc

    # -- content --------------------------------------------------------------------
    def _read_resources(self, resources: list[tuple[str, dict[str, Any]]],
                        full_urls: dict[str, str]) -> ParsedInput:
        readings: list[Reading] = []
        patients: list[dict[str, Any]] = []
        med_resources: list[dict[str, Any]] = []
        medications: dict[str, dict[str, Any]] = {}
        extra: dict[str, Any] = {"patient": {}, "context": {}}
        latest_bp: tuple[datetime | None, str, str] | None = None
        for where, resource in resources:
            kind = resource["resourceType"]
            label = _label(resource)
            if kind == "Observation":
                outcome = self._observation(resource, label)
                if outcome is None:
                    continue
                if isinstance(outcome, Reading):
                    readings.append(outcome)
                elif outcome[0] == "context.bp":
                    _, text, moment = outcome
                    if latest_bp is None or (moment is not None and (latest_bp[0] is None
                                                                     or moment > latest_bp[0])):
                        if latest_bp is not None:
                            self.unused.append(f"FHIR {latest_bp[2]}: an earlier blood pressure; the latest "
                                               "is used")
                        latest_bp = (moment, text, label)
                    else:
                        self.unused.append(f"FHIR {label}: an earlier blood pressure; the latest is used")
                else:
                    dotted, number, _ = outcome
                    section, name = dotted.split(".")
                    if name in extra[section]:
                        raise self.fail(f"{dotted} is given twice ({self.provenance[dotted]} and {label})")
                    extra[section][name] = number
                    self.provenance[dotted] = f"FHIR {label}"
            elif kind == "Patient":
                patients.append(resource)
            elif kind in ("MedicationStatement", "MedicationRequest"):
                med_resources.append(resource)
            elif kind == "Medication":
                medications[label] = resource
                for url, url_where in full_urls.items():
                    if url_where == where:
                        medications[url] = resource
            else:
                self.outside.append((kind, f"FHIR {label}: a {kind} is not read for an acid-base assessment"))
        if latest_bp is not None:
            extra["context"]["bp"] = latest_bp[1]
            self.provenance["context.bp"] = f"FHIR {latest_bp[2]}"

        def conflict(message: str, involved: Any) -> InputError:
            return self.fail(message)

        data, provenance, duplicates = assemble_sections(readings, conflict)
        self.provenance.update(provenance)
        self.unused.extend(duplicates)
        self._patient(patients, readings, extra["patient"])
        self._medications(med_resources, medications, extra["context"])
        for section in ("patient", "context"):
            if extra[section]:
                data[section] = extra[section]
        return ParsedInput(
            data=data, provenance=self.provenance, unused=self.unused, notices=self.notices, outside=self.outside
        )

    def _observation(
        self, resource: dict[str, Any], label: str
    ) -> Reading | tuple[str, Any, datetime | None] | None:
        status = resource.get("status")
        if status not in _USABLE_OBSERVATION:
            self.unused.append(f"FHIR {label}: status {status!r} is not a usable result")
            return None
        codings = (resource.get("code") or {}).get("coding") or []
        loinc = [c.get("code") for c in codings if c.get("system") == LOINC_SYSTEM and c.get("code")]
        if not loinc:
            shown = ", ".join(f"{c.get('system')}|{c.get('code')}" for c in codings) or "none"
            self.unused.append(f"FHIR {label}: has no LOINC code (codes: {shown})")
            return None
        known = {code: self.table.codes[code] for code in loinc if code in self.table.codes}
        if not known:
            text = (resource.get("code") or {}).get("text") or next(
                (c.get("display") for c in codings if c.get("display")), "")
            named = f" ({text})" if text else ""
            what = f"LOINC {', '.join(loinc)}{named}"
            self.outside.append(("Observation", f"FHIR {label}: {what} is not read for an acid-base assessment"))
            return None
        if len({(entry.field, entry.sample) for entry in known.values()}) > 1:
            self.unused.append(f"FHIR {label}: its LOINC codes {', '.join(known)} mean different things; "
                               "not guessed")
            return None
        code, entry = next(iter(known.items()))
        taken_at, moment = self._time(resource, label)
        if taken_at is False:
            return None
        if entry.field == "context.bp":
            return self._blood_pressure(resource, label, moment)
        quantity = resource.get("valueQuantity")
        if resource.get("dataAbsentReason") is not None and any(key.startswith("value") for key in resource):
            raise self.fail(f"FHIR {label} has both a value and a dataAbsentReason, which FHIR R4 forbids (obs-6); "
                            "the result cannot be read either way: correct the resource")
        if not isinstance(quantity, dict) or quantity.get("value") is None:
            present = [key for key in resource if key.startswith("value")] or ["no value"]
            absent = resource.get("dataAbsentReason")
            why = "a dataAbsentReason" if absent else ", ".join(present)
            self.unused.append(f"FHIR {label}: LOINC {code} has {why}, not a valueQuantity with a value")
            return None
        comparator = quantity.get("comparator")
        if comparator not in (None, "<", ">"):
            self.unused.append(f"FHIR {label}: comparator {comparator!r} cannot be held in a case file "
                               "(only < and >)")
            return None
        unit = quantity.get("code") if quantity.get("system") == UCUM_SYSTEM and quantity.get("code") \
            else quantity.get("unit")
        section_name, field_name = entry.field.split(".")
        if not unit and field_name != "ph":
            raise self.fail(f"FHIR {label}: LOINC {code} valueQuantity {quantity['value']!r} has no unit (neither code "
                            "nor unit); notegen does not assume one: give the unit in the resource")
        if section_name == "patient":
            if unit != entry.unit:
                self.unused.append(f"FHIR {label}: {field_name} in {unit!r}; this draft takes it in {entry.unit} "
                                   "only and does not convert it here")
                return None
            return entry.field, quantity["value"], moment
        value: dict[str, Any] = {"value": quantity["value"]}
        if unit is not None and not (field_name == "ph" and unit in _UNITLESS):
            value["unit"] = unit
        if comparator:
            value["qualifier"] = comparator
        origin = f"FHIR {label}" + (" (preliminary)" if status == "preliminary" else "")
        section: Section = section_name  # type: ignore[assignment]
        return Reading(section=section, field=field_name, value=value, origin=origin,
                       taken_at=taken_at or None, order=moment, sample=entry.sample)

    def _time(self, resource: dict[str, Any], label: str) -> tuple[str | None | Literal[False], datetime | None]:
        text = resource.get("effectiveDateTime") or resource.get("effectiveInstant")
        if text is None:
            if "effectivePeriod" in resource:
                self.unused.append(f"FHIR {label}: a result over a period (effectivePeriod) is not a spot value")
                return False, None
            return None, None
        try:
            moment = datetime.fromisoformat(text)
        except ValueError:
            self.unused.append(f"FHIR {label}: time {text!r} is only partial; a result needs a full date")
            return False, None
        return text, as_utc(moment)

    def _blood_pressure(
        self, resource: dict[str, Any], label: str, moment: datetime | None
    ) -> tuple[str, Any, datetime | None] | None:
        found: dict[str, Any] = {}
        for component in resource.get("component") or []:
            codes = {c.get("code") for c in (component.get("code") or {}).get("coding") or []
                     if c.get("system") == LOINC_SYSTEM}
            for part, spec in self.table.bp_components.items():
                quantity = component.get("valueQuantity") or {}
                if spec.code in codes and isinstance(quantity.get("value"), int | float):
                    found[part] = quantity["value"]
        if set(found) != {"systolic", "diastolic"} or not all(float(v).is_integer() for v in found.values()):
            self.unused.append(f"FHIR {label}: a blood pressure panel without whole systolic and diastolic values")
            return None
        return "context.bp", f"{int(found['systolic'])}/{int(found['diastolic'])}", moment

    def _patient(self, patients: list[dict[str, Any]], readings: list[Reading], patient: dict[str, Any]) -> None:
        if len(patients) > 1:
            raise self.fail("the bundle holds more than one Patient: "
                            + ", ".join(_label(p) for p in patients))
        if not patients:
            return
        resource = patients[0]
        label = _label(resource)
        gender = resource.get("gender")
        if gender in ("female", "male"):
            patient["sex"] = gender
            self.provenance["patient.sex"] = f"FHIR {label} (gender)"
        elif gender is not None:
            self.unused.append(f"FHIR {label}: gender {gender!r} is not one the case file's sex field holds; "
                               "not used")
        birth = resource.get("birthDate")
        if birth is None:
            return
        try:
            born = date.fromisoformat(birth)
        except ValueError:
            self.unused.append(f"FHIR {label}: birthDate {birth!r} is only partial; give --set patient.age")
            return
        dated = [r for r in readings if r.taken_at]
        if not dated:
            self.unused.append(f"FHIR {label}: birthDate given, but no dated observation to take the age at; "
                               "give --set patient.age")
            return
        latest = max(dated, key=lambda r: r.order or datetime.min)
        on = date.fromisoformat(str(latest.taken_at)[:10])
        age = on.year - born.year - ((on.month, on.day) < (born.month, born.day))
        patient["age"] = age
        self.provenance["patient.age"] = (f"FHIR {label} (birthDate {birth}, age on {on.isoformat()}, "
                                          "the date of the latest observation)")

    def _medications(self, resources: list[dict[str, Any]], medications: dict[str, dict[str, Any]],
                     context: dict[str, Any]) -> None:
        names: list[str] = []
        seen: dict[str, str] = {}
        for resource in resources:
            label = _label(resource)
            usable = _USABLE_STATEMENT if resource["resourceType"] == "MedicationStatement" else _USABLE_REQUEST
            status = resource.get("status")
            if status not in usable:
                self.unused.append(f"FHIR {label}: status {status!r}; not counted as a current medication")
                continue
            name = _concept_name(resource.get("medicationCodeableConcept"))
            reference = (resource.get("medicationReference") or {}).get("reference")
            if name is None and isinstance(reference, str) and reference in medications:
                name = _concept_name(medications[reference].get("code"))
            if name is None:
                self.unused.append(f"FHIR {label}: the medication has no readable name")
                continue
            key = name.casefold()
            if key in seen:
                self.unused.append(f"FHIR {label}: {name} is already listed from {seen[key]}")
                continue
            seen[key] = label
            self.provenance[f"context.meds[{len(names)}]"] = f"FHIR {label}"
            names.append(name)
        if names:
            context["meds"] = names
        referenced = {(r.get("medicationReference") or {}).get("reference") for r in resources}
        for key, medication in medications.items():
            if key == _label(medication) and key not in referenced and not any(
                    other in referenced for other, res in medications.items() if res is medication):
                self.unused.append(f"FHIR {key}: a Medication no statement or request refers to")


def _concept_name(concept: object) -> str | None:
    if not isinstance(concept, dict):
        return None
    text = concept.get("text")
    if isinstance(text, str) and text.strip():
        return text.strip()
    for coding in concept.get("coding") or []:
        display = coding.get("display") if isinstance(coding, dict) else None
        if isinstance(display, str) and display.strip():
            return display.strip()
    return None


def _label(resource: dict[str, Any]) -> str:
    kind = resource.get("resourceType", "resource")
    ident = resource.get("id")
    return f"{kind}/{ident}" if ident else f"{kind} (no id)"
