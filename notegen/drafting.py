"""The library's front door: load the rules and templates once, then draft case after case.

    drafter = Drafter()
    note = drafter.draft(read_case("samples/gastric_suction.yaml"), DraftOptions(output_format="text"))
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path
from typing import Literal

from .acid_base_settings import AcidBaseSettings, load_acid_base_settings
from .acidbase import read_acid_base
from .assessment import Assessment, _warnings
from .calculations import compute_calculations
from .case import Case

OutputFormat = Literal["markdown", "text", "html", "json"]


@dataclass(frozen=True)
class DraftOptions:
    output_format: OutputFormat | str = "markdown"
    explain: bool = False
    brief: bool = False
    width: int = 80
    ascii_only: bool = False


@dataclass
class Drafter:
    """Holds the loaded settings, rule pack and templates; reuse one for many cases."""

    rules_dirs: tuple[Path, ...] = ()
    template: Path | None = None
    _cache: dict[str, object] = field(default_factory=dict, repr=False)

    @cached_property
    def settings(self) -> AcidBaseSettings:
        return load_acid_base_settings(list(self.rules_dirs))

    def assess(self, case: Case) -> Assessment:
        """Run every stage on a validated case and gather the results."""
        calculations = compute_calculations(case, self.settings)
        reading = read_acid_base(case, self.settings)
        return Assessment(
            case=case,
            acid_base=reading,
            alerts=reading.alerts,
            calculations=calculations,
            chloride_class=None,
            warnings=_warnings(case, reading),
        )

    def draft(self, case: Case, options: DraftOptions | None = None) -> str:
        from .note import render_note

        return render_note(self.assess(case), options or DraftOptions(), template=self.template)
