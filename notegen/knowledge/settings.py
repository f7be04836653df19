"""Acid-base thresholds and constants, loaded from `rules/acid_base.yaml`.

Every threshold the calculation core and the acid-base reading use is a `Setting`
carrying its value, unit and source, so the output can say which figure it used and why.
A service folder holding its own `acid_base.yaml` overrides keys of the shipped file;
an unknown key, a wrong type or a changed unit is rejected with the file and line. One key is not
a number: `date_order` (day-first or month-first), how the service's pasted dates such as 03/04/2026
read; the shipped file leaves it unset, so an ambiguous date is refused unless a case says.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path
from typing import Any, Literal

from pydantic import BaseModel, ConfigDict

from notegen.errors import RulePackError
from notegen.knowledge.rules_yaml import read_rules_file
from notegen.resources import rules_dir

SETTINGS_FILE = "acid_base.yaml"
# Shipped values say where they came from without a machine-specific path, so output is reproducible.
SHIPPED_ORIGIN = "rules/acid_base.yaml"

# Unpickled from the wheel, never validated there: the validator is built on first use.
_FROZEN = ConfigDict(frozen=True, extra="forbid", defer_build=True)

DateOrder = Literal["day-first", "month-first"]
DATE_ORDERS: tuple[DateOrder, ...] = ("day-first", "month-first")
DATE_ORDER_KEY = "date_order"


class Setting(BaseModel):
    """One threshold or constant: its value, unit, published source and the file it came from."""

    model_config = _FROZEN

    value: float
    unit: str
    source: str
    origin: str = SHIPPED_ORIGIN


class DateOrderSetting(BaseModel):
    """How a service's pasted dates such as 03/04/2026 read, with why (its laboratory's printouts)."""

    model_config = _FROZEN

    value: DateOrder
    source: str
    origin: str = SHIPPED_ORIGIN


class AcidBaseSettings(BaseModel):
    """All acid-base settings; field names match the keys of `rules/acid_base.yaml`."""

    model_config = _FROZEN

    ph_low: Setting
    ph_high: Setting
    ph_normal: Setting
    pco2_low: Setting
    pco2_high: Setting
    pco2_normal: Setting
    hco3_low: Setting
    hco3_high: Setting
    hco3_normal: Setting
    pk_carbonic: Setting
    co2_solubility: Setting
    consistency_ph_tolerance: Setting
    consistency_tco2_tolerance: Setting
    anion_gap_low: Setting
    anion_gap_high: Setting
    anion_gap_low_margin: Setting
    alkalemia_gap_rise: Setting
    lactate_normal_below: Setting
    bhb_normal_below: Setting
    creatinine_rise_aki: Setting
    creatinine_rise_hours: Setting
    creatinine_ratio_aki: Setting
    creatinine_ratio_hours: Setting
    anion_gap_normal: Setting
    normal_albumin: Setting
    albumin_gap_factor: Setting
    delta_ratio_low: Setting
    delta_ratio_pure: Setting
    delta_ratio_high: Setting
    delta_ratio_min_fall: Setting
    osmolal_gap_high: Setting
    osmolal_gap_floor: Setting
    winters_tolerance: Setting
    alkalosis_pco2_slope: Setting
    alkalosis_pco2_tolerance: Setting
    alkalosis_pco2_ceiling: Setting
    alkalosis_pco2_alt_intercept: Setting
    alkalosis_pco2_alt_tolerance: Setting
    compensation_edge_margin: Setting
    resp_acidosis_acute_slope: Setting
    resp_acidosis_chronic_slope: Setting
    resp_alkalosis_acute_slope: Setting
    resp_alkalosis_chronic_slope: Setting
    resp_hco3_tolerance: Setting
    venous_pco2_screen: Setting
    venous_pco2_offset: Setting
    lactate_critical: Setting
    salicylate_critical: Setting
    pco2_low_critical: Setting
    pco2_high_critical: Setting
    hypercapnic_acidemia_critical: Setting
    alkalemia_warning: Setting
    alkalemia_critical: Setting
    acidemia_warning: Setting
    acidemia_critical: Setting
    potassium_low_warning: Setting
    potassium_low_critical: Setting
    potassium_high_warning: Setting
    potassium_high_critical: Setting
    bicarbonate_very_high: Setting
    hypoventilation_pco2: Setting
    ionized_ca_low_warning: Setting
    ionized_ca_low_critical: Setting
    ionized_ca_high: Setting
    calcium_high: Setting
    calcium_high_critical: Setting
    calcium_low_critical: Setting
    sodium_low_critical: Setting
    sodium_high_critical: Setting
    glucose_low_critical: Setting
    glucose_high_critical: Setting
    magnesium_low: Setting
    magnesium_low_warning: Setting
    chloride_target: Setting
    chloride_distribution: Setting
    calcium_albumin_factor: Setting
    date_order: DateOrderSetting | None = None  # not a threshold: None unless a service sets it


SETTING_NAMES: tuple[str, ...] = tuple(name for name in AcidBaseSettings.model_fields if name != DATE_ORDER_KEY)

# Pairs (lower, upper) that must stay strictly ordered after any override.
_ORDERED: tuple[tuple[str, str], ...] = (
    ("ph_low", "ph_normal"),
    ("ph_normal", "ph_high"),
    ("pco2_low", "pco2_normal"),
    ("pco2_normal", "pco2_high"),
    ("hco3_low", "hco3_normal"),
    ("hco3_normal", "hco3_high"),
    ("anion_gap_low", "anion_gap_high"),
    ("delta_ratio_low", "delta_ratio_pure"),
    ("delta_ratio_pure", "delta_ratio_high"),
    ("resp_acidosis_acute_slope", "resp_acidosis_chronic_slope"),
    ("resp_alkalosis_acute_slope", "resp_alkalosis_chronic_slope"),
    ("acidemia_critical", "acidemia_warning"),
    ("alkalemia_warning", "alkalemia_critical"),
    ("potassium_low_critical", "potassium_low_warning"),
    ("potassium_high_warning", "potassium_high_critical"),
    ("ionized_ca_low_critical", "ionized_ca_low_warning"),
    ("ionized_ca_low_warning", "ionized_ca_high"),
    ("calcium_low_critical", "calcium_high"),
    ("calcium_high", "calcium_high_critical"),
    ("sodium_low_critical", "sodium_high_critical"),
    ("glucose_low_critical", "glucose_high_critical"),
    ("magnesium_low_warning", "magnesium_low"),
)
_POSITIVE: tuple[str, ...] = (
    "co2_solubility",
    "consistency_ph_tolerance",
    "consistency_tco2_tolerance",
    "normal_albumin",
    "winters_tolerance",
    "alkalosis_pco2_tolerance",
    "resp_hco3_tolerance",
    "chloride_distribution",
)

Problems = list[tuple[str, int | None, str]]


def _read(path: Path, problems: Problems) -> tuple[dict[str, Any], dict[str, int]]:
    try:
        data, lines = read_rules_file(path)
    except RulePackError as error:
        problems.extend(error.problems)
        return {}, {}
    if data is None:
        return {}, {}
    if not isinstance(data, dict):
        problems.append((str(path), 1, "must be a mapping of setting names to entries"))
        return {}, {}
    return data, lines


def _is_number(value: object) -> bool:
    return isinstance(value, int | float) and not isinstance(value, bool)


def _parse_entries(
    path: Path,
    data: dict[str, Any],
    lines: dict[str, int],
    shipped: dict[str, Setting] | None,
    problems: Problems,
    origin: str,
) -> dict[str, Setting]:
    """Check one file's entries; `shipped` is None for the shipped file, else the entries it overrides."""
    name = str(path)
    allowed_keys = {"value", "unit", "source"}
    out: dict[str, Setting] = {}
    for key, entry in data.items():
        line = lines.get(str(key))
        if key not in SETTING_NAMES:
            problems.append((name, line, f"unknown setting `{key}` (known: {', '.join(SETTING_NAMES)})"))
            continue
        if not isinstance(entry, dict):
            problems.append((name, line, f"setting `{key}` must be a mapping with value, unit and source"))
            continue
        extra = sorted(set(entry) - allowed_keys)
        if extra:
            problems.append(
                (name, line, f"setting `{key}` has unknown field(s) {', '.join(map(str, extra))}")
            )
            continue
        value = entry.get("value")
        source = entry.get("source")
        unit = entry.get("unit")
        if not _is_number(value):
            problems.append((name, line, f"setting `{key}`: value must be a number, got {value!r}"))
            continue
        if not isinstance(source, str) or not source.strip():
            problems.append((name, line, f"setting `{key}`: source must name where the figure comes from"))
            continue
        if shipped is None:
            if not isinstance(unit, str):
                problems.append((name, line, f'setting `{key}`: unit must be a string ("" for none)'))
                continue
        else:
            expected_unit = shipped[key].unit
            if unit is None:
                unit = expected_unit
            elif unit != expected_unit:
                problems.append(
                    (
                        name,
                        line,
                        f"setting `{key}`: unit {unit!r} differs from the shipped unit {expected_unit!r}",
                    )
                )
                continue
        assert isinstance(value, int | float)
        out[key] = Setting(value=float(value), unit=str(unit), source=source.strip(), origin=origin)
    return out


def _date_order(path: Path, entry: Any, line: int | None, problems: Problems, origin: str) -> DateOrderSetting | None:
    """`date_order: {value: day-first, source: ...}`: how the service's pasted dates read."""
    if not isinstance(entry, dict) or sorted(entry) != ["source", "value"]:
        problems.append((str(path), line, "setting `date_order` must be a mapping with value and source"))
        return None
    value, source = entry["value"], entry["source"]
    if value not in DATE_ORDERS:
        problems.append((str(path), line, f"setting `date_order`: {value!r} is not day-first or month-first"))
        return None
    if not isinstance(source, str) or not source.strip():
        problems.append((str(path), line, "setting `date_order`: source must say why (the laboratory's printouts)"))
        return None
    return DateOrderSetting(value=value, source=source.strip(), origin=origin)


def _check_order(settings: dict[str, Setting], problems: Problems) -> None:
    for low, high in _ORDERED:
        if settings[low].value >= settings[high].value:
            # Blame the override, not the shipped file, when one side came from a service folder.
            origin = settings[low].origin
            if origin == SHIPPED_ORIGIN:
                origin = settings[high].origin
            message = f"`{low}` ({settings[low].value:g}) must be below `{high}` ({settings[high].value:g})"
            problems.append((origin, None, message))
    for key in _POSITIVE:
        if settings[key].value <= 0:
            problems.append((settings[key].origin, None, f"`{key}` must be above zero"))


def load_acid_base_settings(extra_dirs: Sequence[Path] = ()) -> AcidBaseSettings:
    """Load the shipped settings, then apply each folder's `acid_base.yaml` in order (later wins).

    A folder without an `acid_base.yaml` is skipped; every problem in every file is reported
    together in one `RulePackError`.
    """
    problems: Problems = []
    shipped_path = rules_dir() / SETTINGS_FILE
    data, lines = _read(shipped_path, problems)
    date_order = None
    if DATE_ORDER_KEY in data:
        date_order = _date_order(shipped_path, data[DATE_ORDER_KEY], lines.get(DATE_ORDER_KEY), problems,
                                 SHIPPED_ORIGIN)
        data = {key: entry for key, entry in data.items() if key != DATE_ORDER_KEY}
    merged = _parse_entries(shipped_path, data, lines, None, problems, SHIPPED_ORIGIN)
    if not problems:
        missing = [key for key in SETTING_NAMES if key not in merged]
        if missing:
            problems.append((str(shipped_path), None, f"missing setting(s): {', '.join(missing)}"))
    if problems:
        raise RulePackError(problems)
    for folder in extra_dirs:
        folder = Path(folder)
        if not folder.is_dir():
            problems.append((str(folder), None, "is not a folder"))
            continue
        path = folder / SETTINGS_FILE
        if not path.is_file():
            continue
        data, lines = _read(path, problems)
        if DATE_ORDER_KEY in data:  # a later folder's order wins, as its thresholds do
            date_order = _date_order(path, data[DATE_ORDER_KEY], lines.get(DATE_ORDER_KEY), problems, str(path))
            data = {key: entry for key, entry in data.items() if key != DATE_ORDER_KEY}
        merged.update(_parse_entries(path, data, lines, merged, problems, str(path)))
    if not problems:
        _check_order(merged, problems)
    if problems:
        raise RulePackError(problems)
    return AcidBaseSettings(**merged, date_order=date_order)

