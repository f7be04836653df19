"""How a case field is named in the note's values table; each gas keeps its own sample type."""

from __future__ import annotations

from notegen._format import sentence_case
from notegen.case.model import Case, Measurement
from notegen.knowledge import shipped_knowledge

_GAS_LABELS = {"gas.ph": "pH", "gas.pco2": "PaCO2", "gas.hco3": "HCO3 (gas)", "gas.po2": "PaO2"}
# Venous values are never labelled as arterial (PaCO2): PvCO2 and venous pH wherever they are shown.
_VENOUS_LABELS = {"gas.ph": "Venous pH", "gas.pco2": "PvCO2", "gas.hco3": "HCO3 (venous gas)", "gas.po2": "PvO2"}
_NEUTRAL_LABELS = {"gas.pco2": "PCO2", "gas.po2": "PO2"}


def field_label(field: str, case: Case, measurement: Measurement | None = None) -> str:

    if measurement is not None and field.startswith("gas."):
        sample = measurement.sample  # each gas keeps its own sample type
        if sample == "venous" and field in _VENOUS_LABELS:
            return _VENOUS_LABELS[field]
        if sample is None and field in _NEUTRAL_LABELS and any(
            gas.sample == "venous" for gas in (*case.earlier_gas, case.gas)
        ):
            return _NEUTRAL_LABELS[field]  # not known to be arterial, beside venous gases: not called arterial
        return _GAS_LABELS[field]
    if case.gas.sample == "venous" and field in _VENOUS_LABELS:
        return _VENOUS_LABELS[field]
    if field in _GAS_LABELS:
        return _GAS_LABELS[field]
    info = shipped_knowledge().fields.get(field)
    return sentence_case(info.label if info else field)
