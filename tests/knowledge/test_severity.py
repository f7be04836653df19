"""One severity vocabulary: a word such as "severe" means one threshold for one value, in the alerts,
the rule pack and the paragraph alike (rules/severity.yaml). Cases are invented."""

from __future__ import annotations

from pathlib import Path

from alkalosis_cases import alkalosis_case
from hypothesis import given
from hypothesis import strategies as st
from test_properties import _profile
from typer.testing import CliRunner

from notegen.cli.app import app
from notegen.knowledge import shipped_knowledge
from notegen.knowledge.severity import severity_problems, severity_words
from notegen.pipeline import Drafter, DraftOptions

DRAFTER = Drafter()


def test_the_shipped_alerts_and_pack_share_every_threshold() -> None:
    assert severity_problems(shipped_knowledge().settings, shipped_knowledge().alkalosis_pack.settings) == []
    words = {entry.id: entry for entry in severity_words()}
    assert words["severe_hypokalemia"].pack_settings == ("k_severe_below",)
    # common practice: severe hypokalemia below 2.5 mmol/L, the alerts' critical threshold
    assert shipped_knowledge().alkalosis_pack.settings["k_severe_below"][0] == 2.5


def _cause_evidence(k: float, mg: float | None) -> tuple[str, set[str]]:
    case = alkalosis_case(urine_cl=50, k=k, mg=mg, urine_k=40, urine_creatinine=100)
    assessment = DRAFTER.assess(case)
    depletion = next(c for c in assessment.differential if c.cause == "potassium_magnesium_depletion")
    ids = {e.id for e in (*depletion.supporting, *depletion.opposing)}
    note = DRAFTER.draft(case, DraftOptions(worksheet=True))
    return note, ids


@_profile(60)
@given(k=st.integers(15, 34).map(lambda tenths: tenths / 10), mg=st.sampled_from([None, 0.9, 1.1, 1.2, 1.5, 2.0]))
def test_no_note_calls_a_value_severe_in_one_place_and_not_in_another(k: float, mg: float | None) -> None:
    note, ids = _cause_evidence(k, mg)
    threshold = shipped_knowledge().settings.potassium_low_critical.value
    alert_severe = "severe hypokalemia" in note
    assert alert_severe == (k < threshold)
    assert ("severe_hypokalemia" in ids) == alert_severe
    assert ("potassium_not_severe" in ids) == (not alert_severe)
    assert "too mild" not in note
    if mg is not None:
        mg_severe = mg < shipped_knowledge().settings.magnesium_low_warning.value
        assert ("severe hypomagnesemia" in note) == mg_severe
        assert ("severe_hypomagnesemia" in ids) == mg_severe
        assert "marked hypomagnesemia" not in note


def test_check_pack_refuses_a_service_threshold_that_splits_a_word(tmp_path: Path) -> None:
    (tmp_path / "alkalosis").mkdir()
    (tmp_path / "alkalosis" / "ours.yaml").write_text(
        "settings:\n  - id: k_severe_below\n    value: 2.0\n    unit: mmol/L\n    source: our own\n", encoding="utf-8"
    )
    result = CliRunner().invoke(app, ["check-pack", str(tmp_path)])
    assert result.exit_code == 2
    assert "k_severe_below is 2 but acid_base.yaml's potassium_low_critical is 2.5" in result.stderr
