"""The LOINC table: which LOINC code fills which case field, with the unit and sample it implies."""

from __future__ import annotations

from pathlib import Path
from typing import Literal

from pydantic import BaseModel, ConfigDict, ValidationError

from notegen.errors import RulePackError
from notegen.knowledge.rules_yaml import read_rules_file
from notegen.resources import rules_dir

__all__ = ["BpComponent", "LoincCode", "LoincTable", "loinc_table_path", "read_loinc_table"]

# Unpickled from the wheel, never validated there: the validator is built on first use.
_STRICT = ConfigDict(frozen=True, extra="forbid", defer_build=True)


class LoincCode(BaseModel):
    model_config = _STRICT

    field: str
    name: str
    checked: str
    sample: Literal["arterial", "venous"] | None = None
    unit: str | None = None


class BpComponent(BaseModel):
    model_config = _STRICT

    code: str
    name: str
    checked: str


class LoincTable(BaseModel):
    model_config = _STRICT

    codes: dict[str, LoincCode]
    bp_components: dict[Literal["systolic", "diastolic"], BpComponent]


def loinc_table_path() -> Path:
    return rules_dir() / "vocabulary" / "loinc.yaml"


def read_loinc_table(path: Path | None = None) -> LoincTable:
    """Read and check the LOINC table."""
    path = path or loinc_table_path()
    raw, _ = read_rules_file(path)
    try:
        return LoincTable.model_validate(raw)
    except ValidationError as exc:
        raise RulePackError([(str(path), None, f"{'.'.join(str(p) for p in e['loc'])}: {e['msg']}")
                             for e in exc.errors()]) from exc
