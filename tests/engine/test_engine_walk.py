"""Walking a pack: tree outcomes with unknowns, tiers and their order, next tests, the trace."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

from notegen.engine import MissingFact, NumberFact, Truth, load_pack, walk
from notegen.engine.program import RulePack
from notegen.errors import NotegenError

PACKS = Path(__file__).resolve().parents[1] / "fixtures" / "packs"
PLANTS = load_pack([PACKS / "plants"])
SERVICE = load_pack([PACKS / "plants", PACKS / "plants_service"])


def soil(value: float) -> NumberFact:
    return NumberFact(value, "%")


@pytest.mark.parametrize(
    ("facts", "outcome", "path"),
    [
        ({"soil_moisture": soil(10)}, "water_now", ["soil_dry", "needs_water"]),
        ({"soil_moisture": soil(45)}, "fine", ["soil_dry", "soil_wet", "moisture_fine"]),
        (
            {"soil_moisture": soil(70), "pot_drains": False},
            "hold_water",
            ["soil_dry", "soil_wet", "drainage", "waterlogged"],
        ),
        ({"soil_moisture": soil(70)}, "hold_water", ["soil_dry", "soil_wet", "drainage", "wet_but_draining"]),
        ({}, "unknown", ["soil_dry", "moisture_unknown"]),
    ],
    ids=["dry", "fine", "waterlogged", "wet-drainage-unknown", "no-moisture"],
)
def test_tree_outcomes(facts: dict[str, object], outcome: str, path: list[str]) -> None:
    result = walk(PLANTS, facts)  # type: ignore[arg-type]
    tree = result.outcome("watering_need")
    assert tree.outcome == outcome
    assert list(tree.path) == path


def test_missing_value_goes_down_the_unknown_exit_and_says_why() -> None:
    tree = walk(PLANTS, {"soil_moisture": MissingFact("probe broken")}).outcome("watering_need")
    assert tree.undecided == ("soil_moisture",)
    assert tree.notes == ("Soil moisture not measured.",)


def test_unknown_evidence_is_open_not_against() -> None:
    result = walk(PLANTS, {"leaf_colour": "green"})
    overwatering = result.cause("overwatering")
    assert overwatering.opposing == ()  # dryness is unknown, not false
    assert {e.id for e in overwatering.open} == {"waterlogged_pot", "dry_soil_against"}
    assert overwatering.points_against == 0


def test_sentences_are_filled_with_actual_values() -> None:
    result = walk(PLANTS, {"soil_moisture": soil(12.5), "light_hours": NumberFact(2, "h/day")})
    assert result.outcome("watering_need").notes == ("Soil moisture 12.5 % is below 20 %.",)
    dim = result.cause("low_light").supporting[0]
    assert dim.text == "Only 2 h/day of light a day (below 4 h/day)."
    assert dim.facts == (("light_hours", 2.0),)
    assert dim.source == "common practice"


def test_causes_ranked_by_tier_then_points_then_pack_order() -> None:
    result = walk(
        PLANTS,
        {"soil_moisture": soil(10), "drooping": True, "leaf_colour": "brown", "pests_seen": True, "room": "hall"},
    )
    ranked = [(c.id, c.tier, c.points_for - c.points_against) for c in result.causes]
    # underwatering: strong + weak = 4; pests: strong = 3; both likely, more points first.
    # low_light (0) before overwatering (-3): both unlikely, net decides.
    assert ranked == [("underwatering", "likely", 4), ("pests", "likely", 3), ("low_light", "unlikely", 0),
                      ("overwatering", "unlikely", -3)]  # fmt: skip


def _tier_pack(tmp_path: Path, supporting: list[str], opposing: list[str]) -> RulePack:
    """A one-cause pack whose evidence items all hold, to test the tier rule alone."""

    def items(strengths: list[str], prefix: str) -> str:
        return "".join(
            f"        - {{id: {prefix}{i}, when: {{fact: flag, is: true}}, strength: {s}, says: x,"
            " source: common practice}\n"
            for i, s in enumerate(strengths)
        )

    text = (
        "pack: {id: tiers, title: tiers}\n"
        "facts: [{id: flag, kind: boolean}]\n"
        "causes:\n  - id: c\n    label: c\n    evidence:\n"
        f"      for:\n{items(supporting, 'f') or '        []'}\n"
        f"      against:\n{items(opposing, 'a') or '        []'}\n"
    )
    (tmp_path / "p.yaml").write_text(text)
    return load_pack([tmp_path])


@pytest.mark.parametrize(
    ("supporting", "opposing", "tier"),
    [
        (["strong"], [], "likely"),  # net 3
        (["moderate", "weak"], [], "likely"),  # net 3
        (["moderate"], [], "possible"),  # net 2
        (["weak"], [], "possible"),  # net 1
        ([], [], "unlikely"),  # nothing either way
        (["weak"], ["weak"], "unlikely"),  # net 0
        (["strong"], ["strong"], "possible"),  # strong support is kept in view
        (["strong", "strong"], ["moderate"], "likely"),  # net 4
        ([], ["strong"], "unlikely"),
    ],
)
def test_tier_rule(tmp_path: Path, supporting: list[str], opposing: list[str], tier: str) -> None:
    pack = _tier_pack(tmp_path, supporting, opposing)
    assert walk(pack, {"flag": True}).cause("c").tier == tier


def test_equal_causes_keep_pack_order() -> None:
    result = walk(PLANTS, {"soil_moisture": soil(45), "light_hours": NumberFact(5, "h/day"), "pests_seen": False})
    # Moist soil speaks against underwatering (-3); the other three have nothing either way
    # (pests: "no pests" needs the room, which is not given), so pack order decides among them.
    assert [(c.id, c.points_for - c.points_against) for c in result.causes] == [
        ("overwatering", 0), ("low_light", 0), ("pests", 0), ("underwatering", -3)
    ]  # fmt: skip


def test_first_suggestion_is_the_one_that_decides_the_tree() -> None:
    result = walk(PLANTS, {})
    assert result.suggestions[0].test == "moisture_probe"
    why = result.suggestions[0].why
    assert why.startswith("Soil moisture not given; the result would decide: watering need (now unknown; ")
    assert "could be water now, hold the water or fine" in why  # outcome_labels give the words
    assert "underwatering (now unlikely; could become likely)" in why


def test_no_test_suggested_for_facts_already_present() -> None:
    result = walk(PLANTS, {"soil_moisture": soil(10), "pests_seen": False, "light_hours": NumberFact(8, "h/day")})
    assert [s.test for s in result.suggestions] == []


def test_a_test_is_suggested_only_where_its_answer_matters() -> None:
    # Drainage matters only once the soil is wet: it then separates waterlogged from draining.
    dry = walk(PLANTS, {"soil_moisture": soil(10)})
    assert "drainage_check" not in [s.test for s in dry.suggestions]
    wet = walk(PLANTS, {"soil_moisture": soil(70)})
    drainage = next(s for s in wet.suggestions if s.test == "drainage_check")
    assert drainage.decides[0].id == "overwatering" and drainage.decides[0].could_be == ("likely",)
    assert drainage.as_dict() == {"test": "drainage_check", "why": drainage.why}


def test_purpose_opens_the_reason() -> None:
    result = walk(PLANTS, {"soil_moisture": soil(45)})
    inspection = next(s for s in result.suggestions if s.test == "leaf_inspection")
    assert inspection.why.startswith("Look under the leaves. Pests seen on the leaves not given;")


def test_factors_present_and_undetermined() -> None:
    result = walk(PLANTS, {"pot_drains": False})
    by_id = {f.id: f for f in result.factors}
    assert by_id["poor_drainage"].status == "present" and by_id["poor_drainage"].text == "The pot does not drain."
    assert by_id["dim_room"].status == "undetermined" and by_id["dim_room"].missing == ("light_hours",)
    assert "poor_drainage" not in {f.id for f in walk(PLANTS, {"pot_drains": True}).factors}


def test_trace_names_each_node_its_condition_values_and_outcome() -> None:
    steps = walk(PLANTS, {"soil_moisture": soil(70)}).trace()
    nodes = [s for s in steps if s.kind in ("node", "leaf")]
    assert [(s.id, s.outcome, s.goes_to) for s in nodes] == [
        ("soil_dry", Truth.FALSE, "soil_wet"),
        ("soil_wet", Truth.TRUE, "drainage"),
        ("drainage", Truth.UNKNOWN, "wet_but_draining"),
        ("wet_but_draining", "hold_water", None),
    ]
    assert nodes[0].condition == "soil moisture below 20 % (setting soil_dry_below)"
    assert nodes[0].values == (("soil_moisture", "70 %"),)
    assert nodes[2].values == (("pot_drains", "not given"),)
    evidence = {s.id: s for s in steps if s.kind == "evidence"}
    assert evidence["underwatering.wet_soil"].outcome is Truth.TRUE
    assert evidence["pests.pests_found"].outcome is Truth.UNKNOWN
    assert nodes[0].as_dict()["outcome"] == "false"


def test_service_overlay_changes_threshold_and_wording_in_the_walk() -> None:
    facts = {"soil_moisture": soil(25)}
    assert walk(PLANTS, facts).outcome("watering_need").outcome == "fine"
    tree = walk(SERVICE, facts).outcome("watering_need")
    assert tree.outcome == "water_now"
    assert tree.notes == ("Water today: soil at 25 %, our limit is 30 %.",)


def test_reported_bound_is_used_three_valued() -> None:
    assert walk(PLANTS, {"soil_moisture": NumberFact(15, "%", "<")}).outcome("watering_need").outcome == "water_now"
    # ">15" might be dry or not: the walk cannot decide.
    assert walk(PLANTS, {"soil_moisture": NumberFact(15, "%", ">")}).outcome("watering_need").outcome == "unknown"


@pytest.mark.parametrize(
    ("facts", "words"),
    [
        ({"soil_wetness": soil(3)}, "not in the catalogue"),
        ({"soil_moisture": NumberFact(3, "fraction")}, "is in fraction; the pack expects %"),
        ({"soil_moisture": 3}, "a bare number"),
        ({"leaf_colour": "purple"}, "not one of"),
        ({"drooping": "yes"}, "should be a boolean"),
    ],
)
def test_facts_are_checked_never_coerced(facts: dict[str, object], words: str) -> None:
    with pytest.raises(NotegenError) as caught:
        walk(PLANTS, facts)  # type: ignore[arg-type]
    assert words in str(caught.value)


def test_engine_imports_nothing_clinical_or_cli() -> None:
    code = (
        "import sys, notegen.engine; "
        "bad = [m for m in sys.modules if m in ('typer', 'click', 'jinja2', 'notegen.case.model', 'notegen.cli.app')]; "
        "print(bad)"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert out.strip() == "[]"


def test_a_test_that_settles_a_later_tree_through_an_unwalked_node(tmp_path: Path) -> None:
    # With p unknown, `first` ends in `open` and node `ask_q` is only possibly reached. Yet q = false
    # rules out `yes_` whatever p is, which decides tree `second`: the test for q must be suggested.
    (tmp_path / "p.yaml").write_text(
        "pack: {id: chain, title: chain}\n"
        "facts: [{id: p, kind: boolean}, {id: q, kind: boolean}]\n"
        "trees:\n"
        "  - id: first\n    title: first\n    outcomes: [yes_, no_, open]\n    start: ask_p\n    nodes:\n"
        "      - {id: ask_p, ask: {fact: p, is: true}, if_true: ask_q, if_false: f_no, if_unknown: f_open,"
        " source: common practice}\n"
        "      - {id: ask_q, ask: {fact: q, is: true}, if_true: f_yes, if_false: f_no, if_unknown: f_open,"
        " source: common practice}\n"
        "      - {id: f_yes, outcome: yes_, source: common practice}\n"
        "      - {id: f_no, outcome: no_, source: common practice}\n"
        "      - {id: f_open, outcome: open, source: common practice}\n"
        "  - id: second\n    title: second\n    outcomes: [b_yes, b_no, b_open]\n    start: ask_first\n    nodes:\n"
        "      - {id: ask_first, ask: {fact: first, is: yes_}, if_true: s_yes, if_false: s_no, if_unknown: s_open,"
        " source: common practice}\n"
        "      - {id: s_yes, outcome: b_yes, source: common practice}\n"
        "      - {id: s_no, outcome: b_no, source: common practice}\n"
        "      - {id: s_open, outcome: b_open, source: common practice}\n"
        "tests: [{id: q_test, label: q test, provides: [q], source: common practice}]\n"
    )
    pack = load_pack([tmp_path])
    result = walk(pack, {})
    assert result.outcome("second").outcome == "b_open"
    [suggestion] = result.suggestions
    assert suggestion.test == "q_test"
    assert [(d.id, d.could_be) for d in suggestion.decides] == [("second", ("b_no",))]
