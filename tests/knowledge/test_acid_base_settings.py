"""Loading `rules/acid_base.yaml` and a service's overrides."""

from __future__ import annotations

from pathlib import Path

import pytest
import yaml

from notegen.acidbase.reading import read_acid_base
from notegen.case.model import Case, Chem, Gas
from notegen.errors import RulePackError
from notegen.knowledge import shipped_knowledge
from notegen.knowledge.settings import (
    SETTING_NAMES,
    SHIPPED_ORIGIN,
    load_acid_base_settings,
)
from notegen.resources import rules_dir


def _write(folder: Path, text: str) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / "acid_base.yaml"
    path.write_text(text, encoding="utf-8")
    return path


def test_shipped_file_has_every_setting_with_value_unit_and_source() -> None:
    raw = yaml.safe_load((rules_dir() / "acid_base.yaml").read_text(encoding="utf-8"))
    assert sorted(raw) == sorted(SETTING_NAMES)
    settings = load_acid_base_settings()
    for name in SETTING_NAMES:
        setting = getattr(settings, name)
        assert setting.source.strip(), name
        assert isinstance(setting.unit, str), name
        assert setting.origin == SHIPPED_ORIGIN


def test_shipped_values_are_the_published_ones() -> None:
    s = shipped_knowledge().settings
    # Albert 1967 (Winter's +/- 2); Berend 2014 (0.7 +/- 2); Rastegar 2007 (0.4, 1, 2); Figge 1998 (2.5).
    assert s.winters_tolerance.value == 2
    assert (s.alkalosis_pco2_slope.value, s.alkalosis_pco2_tolerance.value) == (0.7, 2)
    assert (s.delta_ratio_low.value, s.delta_ratio_pure.value, s.delta_ratio_high.value) == (0.4, 1.0, 2.0)
    assert s.albumin_gap_factor.value == 2.5
    # Anderson & Henrich 1987: 48.5 % mortality above pH 7.60.
    assert s.alkalemia_critical.value == 7.60
    assert "Anderson" in s.alkalemia_critical.source
    # Every rule of thumb says so.
    assert "common practice" in s.resp_hco3_tolerance.source


def test_service_override_changes_values_and_records_its_file(tmp_path: Path) -> None:
    path = _write(
        tmp_path / "icu",
        "anion_gap_low: {value: 3, source: 'ion-selective analyser, laboratory range'}\n"
        "anion_gap_high: {value: 11, unit: mmol/L, source: 'ion-selective analyser, laboratory range'}\n",
    )
    s = load_acid_base_settings([tmp_path / "icu"])
    assert (s.anion_gap_low.value, s.anion_gap_high.value) == (3, 11)
    assert s.anion_gap_high.unit == "mmol/L"
    assert s.anion_gap_high.origin == str(path)
    assert s.ph_low.origin == SHIPPED_ORIGIN


def test_override_reaches_the_reading(tmp_path: Path) -> None:
    _write(
        tmp_path / "lab",
        "anion_gap_low: {value: 3, source: lab}\nanion_gap_high: {value: 11, source: lab}\n",
    )
    case = Case(gas=Gas(sample="arterial", ph=7.40, pco2=40, hco3=24.5), chem=Chem(na=140, cl=101.5))
    # Anion gap 14: normal on the 8-16 range (Winter 1990 older analysers), high on 3-11 (ion-selective).
    assert read_acid_base(case).anion_gap_status == "normal"
    reading = read_acid_base(case, load_acid_base_settings([tmp_path / "lab"]))
    assert reading.anion_gap_status == "high"
    assert reading.anion_gap_reference == (3, 11)


def test_later_folder_wins(tmp_path: Path) -> None:
    _write(tmp_path / "a", "normal_albumin: {value: 4.4, source: a}\n")
    _write(tmp_path / "b", "normal_albumin: {value: 4.2, source: b}\n")
    assert load_acid_base_settings([tmp_path / "a", tmp_path / "b"]).normal_albumin.value == 4.2


def test_folder_without_settings_file_is_skipped(tmp_path: Path) -> None:
    (tmp_path / "empty").mkdir()
    assert load_acid_base_settings([tmp_path / "empty"]) == load_acid_base_settings()


def test_unknown_key_rejected_with_file_and_line(tmp_path: Path) -> None:
    path = _write(
        tmp_path / "svc", "ph_low: {value: 7.34, source: x}\nanion_gap_hi: {value: 11, source: x}\n"
    )
    with pytest.raises(RulePackError) as info:
        load_acid_base_settings([tmp_path / "svc"])
    text = str(info.value)
    assert f"{path}:2" in text
    assert "unknown setting `anion_gap_hi`" in text


@pytest.mark.parametrize(
    "text,message",
    [
        ("ph_low: {value: 7.34, unit: kPa, source: x}\n", "differs from the shipped unit"),
        ("ph_low: {value: '7.34', source: x}\n", "value must be a number"),
        ("ph_low: {value: true, source: x}\n", "value must be a number"),
        ("ph_low: {value: 7.34}\n", "source must name"),
        ("ph_low: 7.34\n", "must be a mapping"),
        ("ph_low: {value: 7.34, source: x, note: y}\n", "unknown field"),
        ("- ph_low\n", "must be a mapping of setting names"),
        ("ph_low: {value: 7.34, source: x\n", "not valid YAML"),
        ("ph_low: !!python/object:os.system {value: 1}\n", "not valid YAML"),
        ("ph_low: {value: 7.50, source: x}\n", "must be below `ph_normal`"),
        ("winters_tolerance: {value: 0, source: x}\n", "must be above zero"),
    ],
    ids=[
        "unit-changed", "value-string", "value-bool", "no-source", "bare-number", "extra-field",
        "not-a-mapping", "broken-yaml", "python-tag", "order", "zero-tolerance",
    ],
)  # fmt: skip
def test_bad_override_rejected(tmp_path: Path, text: str, message: str) -> None:
    path = _write(tmp_path / "svc", text)
    with pytest.raises(RulePackError) as info:
        load_acid_base_settings([tmp_path / "svc"])
    assert message in str(info.value)
    assert str(path) in str(info.value)


def test_every_problem_reported_at_once(tmp_path: Path) -> None:
    _write(tmp_path / "svc", "bogus_one: {value: 1, source: x}\nbogus_two: {value: 2, source: x}\n")
    with pytest.raises(RulePackError) as info:
        load_acid_base_settings([tmp_path / "svc"])
    assert len(info.value.problems) == 2


def test_missing_folder_rejected(tmp_path: Path) -> None:
    with pytest.raises(RulePackError, match="is not a folder"):
        load_acid_base_settings([tmp_path / "nowhere"])


def test_a_setting_given_twice_is_refused_not_silently_replaced(tmp_path: Path) -> None:
    # plain YAML would keep the second value; a service must not lose a threshold without a word
    path = _write(tmp_path / "svc", "ph_low: {value: 7.34, source: a}\nph_low: {value: 7.30, source: b}\n")
    with pytest.raises(RulePackError) as info:
        load_acid_base_settings([tmp_path / "svc"])
    assert f"{path}:2: is not valid YAML: `ph_low` is given twice (first on line 1)" in str(info.value)


def test_a_field_given_twice_within_a_setting_is_refused(tmp_path: Path) -> None:
    _write(tmp_path / "svc", "ph_low:\n  value: 7.34\n  source: a\n  value: 7.30\n")
    with pytest.raises(RulePackError, match="`value` is given twice"):
        load_acid_base_settings([tmp_path / "svc"])
