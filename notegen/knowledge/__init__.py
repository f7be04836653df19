"""Everything notegen knows, read from `rules/`: one `Knowledge` object holds it, loaded on first use.

    knowledge = Knowledge(rules_dirs=(Path("our-service"),))   # the shipped rules, a service's laid over
    knowledge.settings.anion_gap_high.value, knowledge.alkalosis_pack, knowledge.medications["furosemide"]
    knowledge.problems()                                       # what `check-pack` reports, file and line

The `Drafter` holds one for its rule folders. `shipped_knowledge()` is the one for the shipped folder,
built once per process; every stage that needs the shipped tables asks it (`shipped_knowledge().fields`),
so nothing under `rules/` is parsed twice and no reader module keeps a cache of its own. The readers
(`settings`, `vocabulary`, `analytes`, `loinc`, `packs`) only read; they never import this module.
Each part is read only when first used, so a case that needs no rule pack never loads one. Every
file goes through `rules_yaml.read_rules_file`.

An installed wheel carries the shipped parts (settings, vocabularies, analyte and LOINC tables)
read and validated when it was built (`prepare_knowledge`, called by `hatch_build.py`); they are
used while every file under the shipped `rules/` still matches (`prepared_pack.load_prepared`), so
a note does not parse those files again. A service's settings are always read from its YAML.
"""

from __future__ import annotations

from functools import cache, cached_property
from pathlib import Path
from typing import TYPE_CHECKING, Any, cast

if TYPE_CHECKING:
    from notegen.engine import RulePack
    from notegen.knowledge.analytes import Vocabulary
    from notegen.knowledge.loinc import LoincTable
    from notegen.knowledge.settings import AcidBaseSettings
    from notegen.knowledge.vocabulary import DrugInfo, FieldInfo, FindingInfo

__all__ = ["ACIDOSIS_PACK", "ALKALOSIS_PACK", "Knowledge", "prepare_knowledge", "rule_pack", "shipped_knowledge"]

ALKALOSIS_PACK = "alkalosis"
ACIDOSIS_PACK = "acidosis"
SHIPPED_PARTS = ("settings", "fields", "medications", "findings", "next_test_sentences", "analytes", "loinc")
PREPARED_NAME = "knowledge"  # its pickle and key in the wheel's prepared folder
Problems = list[tuple[str, int | None, str]]


class Knowledge:
    """The settings, vocabularies, analyte and LOINC tables and rule packs, for one set of rule folders."""

    def __init__(self, rules_dirs: tuple[Path, ...] | list[Path] = ()) -> None:
        self.rules_dirs: tuple[Path, ...] = tuple(Path(d) for d in rules_dirs)

    def __repr__(self) -> str:
        return f"Knowledge(rules_dirs={self.rules_dirs!r})"

    @cached_property
    def _prepared(self) -> dict[str, bytes] | None:
        """The shipped parts as the wheel's build hook read them, each still pickled, while every rule file matches.

        Each part is unpickled when first used, so a case file that needs no LOINC table does not
        import its reader.
        """
        from notegen.knowledge.prepared_pack import load_prepared
        from notegen.resources import prepared_packs_dir, rules_dir

        prepared = prepared_packs_dir()
        kept = load_prepared(PREPARED_NAME, rules_dir(), prepared) if prepared is not None else None
        return kept if isinstance(kept, dict) and set(kept) == set(SHIPPED_PARTS) else None

    def _kept(self, part: str) -> Any:
        """The prepared shipped `part`, or None when there is none (a checkout, or a rule file changed)."""
        if self._prepared is None:
            return None
        import pickle

        return pickle.loads(self._prepared[part])  # noqa: S301 - notegen's own file, from its package folder

    @cached_property
    def settings(self) -> AcidBaseSettings:
        if not self.rules_dirs and (kept := self._kept("settings")) is not None:
            return cast("AcidBaseSettings", kept)
        from notegen.knowledge.settings import load_acid_base_settings

        return load_acid_base_settings(list(self.rules_dirs))

    @cached_property
    def alkalosis_pack(self) -> RulePack:
        from notegen.knowledge.packs import load_rule_pack

        return load_rule_pack(ALKALOSIS_PACK, self.rules_dirs)

    @cached_property
    def acidosis_pack(self) -> RulePack:
        from notegen.knowledge.packs import load_rule_pack

        return load_rule_pack(ACIDOSIS_PACK, self.rules_dirs)

    def pack(self, name: str) -> RulePack:
        """The rule pack `name` (ALKALOSIS_PACK or ACIDOSIS_PACK) for these folders."""
        if name == ALKALOSIS_PACK:  # only the one asked for: loading a pack costs milliseconds
            return self.alkalosis_pack
        if name == ACIDOSIS_PACK:
            return self.acidosis_pack
        raise KeyError(name)

    # The vocabularies are the shipped ones: a service adds rules and wording, not case fields.
    @cached_property
    def fields(self) -> dict[str, FieldInfo]:
        if (kept := self._kept("fields")) is not None:
            return cast("dict[str, FieldInfo]", kept)
        from notegen.knowledge.vocabulary import read_fields

        return read_fields()

    @cached_property
    def medications(self) -> dict[str, DrugInfo]:
        if (kept := self._kept("medications")) is not None:
            return cast("dict[str, DrugInfo]", kept)
        from notegen.knowledge.vocabulary import read_medications

        return read_medications()

    @cached_property
    def findings(self) -> dict[str, FindingInfo]:
        if (kept := self._kept("findings")) is not None:
            return cast("dict[str, FindingInfo]", kept)
        from notegen.knowledge.vocabulary import read_findings

        return read_findings()

    @cached_property
    def next_test_sentences(self) -> dict[str, str]:
        if (kept := self._kept("next_test_sentences")) is not None:
            return cast("dict[str, str]", kept)
        from notegen.knowledge.vocabulary import read_next_test_sentences

        return read_next_test_sentences()

    @cached_property
    def finding_labels(self) -> dict[str, str]:
        return {info.id: info.label for info in self.findings.values()}

    def finding_label(self, finding_id: str) -> str:
        """The words for a finding id; a look-up, not a scan, since a case may list many findings."""
        label = self.finding_labels.get(finding_id)
        return label if label is not None else finding_id.replace("_", " ")

    def drug(self, name: str) -> DrugInfo | None:
        """The medication vocabulary's entry for a generic name or a synonym."""
        from notegen.knowledge.vocabulary import fold

        return self.medications.get(fold(name))

    @cached_property
    def analytes(self) -> Vocabulary:
        if (kept := self._kept("analytes")) is not None:
            return cast("Vocabulary", kept)
        from notegen.knowledge.analytes import read_analyte_vocabulary

        return read_analyte_vocabulary()

    @cached_property
    def loinc(self) -> LoincTable:
        if (kept := self._kept("loinc")) is not None:
            return cast("LoincTable", kept)
        from notegen.knowledge.loinc import read_loinc_table

        return read_loinc_table()

    def problems(self) -> Problems:
        """Every problem of every file these folders read, as (file, line, message); empty when all load."""
        from notegen.errors import RulePackError
        from notegen.knowledge.packs import check_rule_pack

        problems: Problems = []
        missing = [folder for folder in self.rules_dirs if not folder.is_dir()]
        if missing:
            return [(str(folder), None, "no such folder") for folder in missing]
        for part in SHIPPED_PARTS:
            try:
                getattr(self, part)
            except RulePackError as error:
                problems.extend(error.problems)
        for pack in (ALKALOSIS_PACK, ACIDOSIS_PACK):
            problems.extend(check_rule_pack(pack, self.rules_dirs))
        return problems


def prepare_knowledge(rules: Path, target: Path) -> None:
    """Read and validate the shipped parts (SHIPPED_PARTS) from the shipped rules; keep them in `target`.

    Called by the wheel's build hook, in a checkout, where the shipped rules are `rules`; a part
    that fails to read stops the build with its file and line.
    """
    import pickle

    from notegen.knowledge.prepared_pack import write_prepared

    knowledge = Knowledge()
    parts = {part: pickle.dumps(getattr(knowledge, part), protocol=pickle.HIGHEST_PROTOCOL) for part in SHIPPED_PARTS}
    write_prepared(parts, PREPARED_NAME, rules, target)


@cache
def shipped_knowledge() -> Knowledge:
    """The knowledge of the shipped `rules/` folder, built once per process."""
    return Knowledge()


def rule_pack(name: str, rules_dirs: tuple[Path, ...] | list[Path] = ()) -> RulePack:
    """The shipped pack `name` with any service folders laid over it; `RulePackError` lists every problem.

    Without service folders it is the process's shipped pack, loaded once.
    """
    return Knowledge(rules_dirs).pack(name) if rules_dirs else shipped_knowledge().pack(name)
