"""A number without a unit is read only when one reading is possible.

Some analytes have SI and conventional numbers in overlapping ranges (magnesium 0.7 is
a plausible mmol/L and a plausible mg/dL). A bare number of such an analyte is read in a
unit system only when the case declares it (`units:` in the case file, or `--set
units=...`); otherwise, when both readings are plausible, it is refused with both named.
When only one reading is plausible the plausibility check decides, as before: a value that
fits only the other system is refused with the suggestion, never converted.
"""

from __future__ import annotations

import math
from typing import Any

from notegen._henderson import henderson_hasselbalch_ph
from notegen.case import units as u
from notegen.case.checks import _Collector, _fmt
from notegen.knowledge import shipped_knowledge

# Fields whose SI and conventional numbers differ. PO2 (mmHg/kPa) is left out: it does not
# enter the acid-base reading, and is shown only as reported. The `bun` key is left out too:
# urea nitrogen is the conventional name and is given in mg/dL; an SI laboratory reports
# urea, which the case file takes as `urea` (and which is checked, through `urea=True`).
AMBIGUOUS_FIELDS = frozenset(
    name for name, units in u.FIELD_UNITS.items()
    if units.si != units.conventional and name not in ("gas.po2", "chem.bun")
)


def _reading(field_name: str, number: float, unit: str, urea: bool) -> float:
    if urea and unit == "mg/dL":  # urea mass, not urea nitrogen
        return number * u.UREA_MG_DL_TO_BUN_MG_DL
    return u.to_canonical(field_name, number, unit)


def ambiguous_bare_value(field_name: str, number: float, *, urea: bool = False) -> str | None:
    """The refusal for a bare `number` plausible in both unit systems, or None when it is not.

    `urea` marks the case file's `urea` key (held as BUN): its conventional unit is urea mass.
    """
    if (field_name not in AMBIGUOUS_FIELDS and not urea) or field_name == "gas.pco2":
        return None  # PCO2: its gas decides (`ambiguous_bare_pco2`)
    return _both_readings(field_name, number, urea)


def ambiguous_bare_pco2(pco2: float, ph: float | None, hco3: float | None) -> str | None:
    """The refusal for a bare PCO2 in a case with no unit system, or None when it reads only one way.

    10-26.7 is a plausible mmHg and a plausible kPa. Such a value is read in mmHg only when
    its own gas's pH and bicarbonate fit it by Henderson-Hasselbalch (within 0.1).
    """
    if ph is not None and hco3 is not None and pco2 > 0 and hco3 > 0:
        s = shipped_knowledge().settings
        calculated = s.pk_carbonic.value + math.log10(hco3 / (s.co2_solubility.value * pco2))
        if abs(calculated - ph) <= 0.1:
            return None
    return _both_readings("gas.pco2", pco2, False)


def _both_readings(field_name: str, number: float, urea: bool) -> str | None:
    info = shipped_knowledge().fields[field_name]
    units = u.FIELD_UNITS[field_name]
    readings: list[str] = []
    for unit in (units.si, units.conventional):
        value = _reading(field_name, number, unit, urea)
        if not info.low <= value <= info.high:
            return None
        shown = f"{_fmt(number)} {unit}"
        if unit != units.canonical or urea:
            shown += f" ({_fmt(value)} {units.canonical}{' urea nitrogen' if urea else ''})"
        readings.append(shown)
    label = "urea" if urea else info.label
    return (
        f"{label} {_fmt(number)} has no unit: {readings[0]} or {readings[1]}? Give the unit "
        '(e.g. "' + f'{_fmt(number)} {units.si}"), or declare the case\'s units '
        "(`units: si` or `units: conventional` in the case file, or --set units=si)"
    )


def pco2_fits_other_unit(ph: float, pco2: float, hco3: float, system: str) -> tuple[str, float] | None:
    """When a bare PCO2 (in `system`'s default unit) fits pH and bicarbonate only in the other unit.

    Returns (the other unit, the PCO2 in mmHg that reading gives), or None. A kPa value typed
    into a conventional case (6.4 for 48 mmHg) is still "plausible" in mmHg; Henderson-Hasselbalch
    (the settings' pK' and solubility, the one formula, `notegen._henderson`) tells the two apart.
    """
    if pco2 <= 0 or hco3 <= 0:
        return None
    default = u.default_unit("gas.pco2", system)
    other = "kPa" if default == "mmHg" else "mmHg"
    as_default = u.to_canonical("gas.pco2", pco2, default)
    as_other = u.to_canonical("gas.pco2", pco2, other)
    bounds = shipped_knowledge().fields["gas.pco2"]
    if not bounds.low <= as_other <= bounds.high:
        return None

    settings = shipped_knowledge().settings
    pk, solubility = settings.pk_carbonic.value, settings.co2_solubility.value

    def calculated_ph(pco2_mmhg: float) -> float:
        return henderson_hasselbalch_ph(pco2_mmhg, hco3, pk, solubility)

    if abs(calculated_ph(as_default) - ph) > 0.1 and abs(calculated_ph(as_other) - ph) <= 0.05:
        return other, as_other
    return None


def _check_pco2_unit(gas: dict[str, Any], path: str, col: _Collector) -> None:
    """Refuse, never convert, a bare PCO2 that only fits its own gas in the other unit."""
    ph, pco2, hco3 = gas.get("ph"), gas.get("pco2"), gas.get("hco3")
    if ph is None or pco2 is None or hco3 is None:
        return
    default = u.default_unit("gas.pco2", col.system)
    reported = u.from_canonical("gas.pco2", pco2, default)
    found = pco2_fits_other_unit(ph, reported, hco3, col.system)
    if found is not None:
        other, alternative = found
        col.problem(
            path,
            f"{_fmt(reported)} {default} does not fit pH {_fmt(ph)} and bicarbonate {_fmt(hco3)}, but "
            f"{_fmt(reported)} {other} ({_fmt(alternative)} mmHg) would; give the unit explicitly "
            f'(e.g. "{_fmt(reported)} {other}")',
        )
