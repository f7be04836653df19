"""The one reader of rule files refuses what a rule must not hold, naming the file and line."""

from __future__ import annotations

import shutil
import time
from pathlib import Path

import pytest
from typer.testing import CliRunner

from notegen.cli.app import app
from notegen.errors import RulePackError
from notegen.knowledge.rules_yaml import read_rules_file
from notegen.knowledge.settings import load_acid_base_settings
from notegen.resources import rules_dir

ALIAS_BOMB = "a: &a [x, x, x, x, x, x, x, x, x]\n" + "".join(
    f"{chr(98 + i)}: &{chr(98 + i)} [*{chr(97 + i)}, *{chr(97 + i)}, *{chr(97 + i)}, *{chr(97 + i)}, *{chr(97 + i)}]\n"
    for i in range(20)
)


@pytest.mark.parametrize(
    ("text", "line", "message"),
    [
        ("a: 1\nb: &x {c: 2}\nd: *x\n", 3, "aliases"),
        ("base: &b {value: 1}\nother:\n  <<: *b\n", 3, "merge keys"),
        ("other:\n  <<: {value: 1}\n", 2, "merge keys"),
        ("x:\n  value: .nan\n", 2, "not a finite number"),
        ("x:\n  value: -.inf\n", 2, "not a finite number"),
        ("x:\n  value: 1234567890123456789012\n", 2, "digits"),
        ("a: 1\na: 2\n", 2, "given twice"),
        ("a: [1, 2\n", 2, "not valid YAML"),
        ("!!python/object/apply:os.system ['true']\n", 1, "not valid YAML"),
        (ALIAS_BOMB, 2, "aliases"),
    ],
    ids=[
        "alias", "merge-with-alias", "merge", "nan", "minus-inf",
        "long-int", "duplicate", "syntax", "python-tag", "bomb",
    ],
)
def test_refused_with_file_and_line(tmp_path: Path, text: str, line: int, message: str) -> None:
    path = tmp_path / "rule.yaml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(RulePackError) as info:
        read_rules_file(path)
    ((filename, where, said),) = info.value.problems
    assert filename == str(path)
    assert where == line
    assert message in said


def test_not_utf8_is_located(tmp_path: Path) -> None:
    path = tmp_path / "rule.yaml"
    path.write_bytes(b"a: 1\nb: caf\xe9\n")
    with pytest.raises(RulePackError) as info:
        read_rules_file(path)
    assert info.value.problems == [(str(path), 2, "is not UTF-8 text; save the file as UTF-8")]


def test_every_shipped_rule_file_reads_cleanly() -> None:
    for path in sorted(rules_dir().rglob("*.yaml")):
        data, _ = read_rules_file(path)
        assert isinstance(data, dict | list), path


def test_a_non_finite_setting_in_a_service_folder_is_refused(tmp_path: Path) -> None:
    (tmp_path / "acid_base.yaml").write_text(
        "anion_gap_high:\n  value: .nan\n  unit: mmol/L\n  source: invented\n", encoding="utf-8"
    )
    with pytest.raises(RulePackError) as info:
        load_acid_base_settings([tmp_path])
    assert "not a finite number" in str(info.value) and ":2:" in str(info.value)


def test_an_alias_bomb_in_a_service_pack_is_refused_quickly(tmp_path: Path) -> None:
    # Before the node check, this file grew to gigabytes while the pack was built.
    (tmp_path / "alkalosis").mkdir()
    (tmp_path / "alkalosis" / "bomb.yaml").write_text(ALIAS_BOMB, encoding="utf-8")
    started = time.monotonic()
    result = CliRunner().invoke(app, ["check-pack", str(tmp_path)])
    assert result.exit_code == 2, result.output
    assert "aliases" in result.output and "bomb.yaml:2" in result.output
    assert time.monotonic() - started < 30  # a generous bound: the bomb itself never finishes


def test_a_malformed_vocabulary_file_exits_2_with_its_file_and_line(tmp_path: Path) -> None:
    """A broken vocabulary file used to end as 'unexpected error' (exit 1)."""
    from notegen.knowledge import vocabulary

    rules = tmp_path / "rules"
    shutil.copytree(rules_dir(), rules)
    (rules / "vocabulary" / "medications.yaml").write_text("furosemide:\n  classes: [loop\n", encoding="utf-8")
    with pytest.raises(RulePackError) as info:
        vocabulary.read_medications(rules)
    assert info.value.exit_code == 2
    assert "medications.yaml:" in str(info.value)
