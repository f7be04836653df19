"""The unit system a paste's own units show, for its values printed without one.

A paste that prints creatinine in µmol/L and glucose in mmol/L is in SI units; a bare
magnesium 0.8 in it is 0.8 mmol/L. The system is taken only when every labelled value of an
analyte whose SI and conventional units differ agrees on it; a mix, or no such value, settles
nothing, and a bare value is then left for the case loader to refuse or read in the case's
declared system. Gas pressures do not count: many laboratories print chemistry in SI units
and gases in mmHg.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace

from notegen.case import units as u
from notegen.case.unit_checks import AMBIGUOUS_FIELDS
from notegen.intake.sections import Reading

_UREA = {"si": "mmol/L", "conventional": "mg/dL"}  # the case file's `urea` key


def _field(reading: Reading) -> str | None:
    urea = (reading.section, reading.field) == ("chem", "urea")
    dotted = "chem.bun" if urea else f"{reading.section}.{reading.field}"
    if dotted not in AMBIGUOUS_FIELDS and reading.field != "urea":
        return None
    return None if dotted.startswith("gas.") else dotted


def _system_of(reading: Reading) -> str | None:
    dotted = _field(reading)
    unit_text = reading.value.get("unit")
    if dotted is None or not isinstance(unit_text, str):
        return None
    unit = u.normalise_unit(unit_text)
    units = u.FIELD_UNITS[dotted]
    if reading.field == "urea":
        si, conventional = _UREA["si"], _UREA["conventional"]
    else:
        si, conventional = units.si, units.conventional
    if unit == si:
        return "si"
    if unit == conventional:
        return "conventional"
    return None


def settle_units(readings: Sequence[Reading]) -> list[Reading]:
    """`readings` with each bare chemistry or urine value given the unit of the paste's one system.

    The origin of a value given its unit this way says so, and which system was read.
    """
    systems = {system for system in map(_system_of, readings) if system is not None}
    if len(systems) != 1:
        return list(readings)
    system = systems.pop()
    settled: list[Reading] = []
    for reading in readings:
        dotted = _field(reading)
        if dotted is None or "unit" in reading.value:
            settled.append(reading)
            continue
        unit = _UREA[system] if reading.field == "urea" else u.default_unit(dotted, system)
        label = "SI" if system == "si" else "conventional"
        origin = f"{reading.origin} (no unit printed; read in {unit}, as the paste's other {label} units)"
        settled.append(replace(reading, value={**reading.value, "unit": unit}, origin=origin))
    return settled
