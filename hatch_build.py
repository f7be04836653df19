"""Wheel build hook: prepare the shipped templates and rule pack once, at build time, not in every process.

The compiled templates land in the wheel at `notegen/_data/templates_compiled/`, with a manifest that
lets an installed notegen tell whether they still match its jinja2 and its templates (see
`notegen/render/compiled_templates.py`). The shipped rule packs, read, validated and checked, land at
`notegen/_data/packs_prepared/` with a manifest of what it was made from (see
`notegen/knowledge/prepared_pack.py`), and so do the considerations (`rules/management.yaml`),
checked against those packs (`notegen/assess/management_file.py`). An editable install reads the
templates and rules from the checkout and prepares them as it always has, so it gets neither.
"""

from __future__ import annotations

import os
import shutil
import sys
import tempfile
from pathlib import Path
from typing import Any

from hatchling.builders.hooks.plugin.interface import BuildHookInterface

COMPILED_IN_WHEEL = "notegen/_data/templates_compiled"
PACKS_IN_WHEEL = "notegen/_data/packs_prepared"


class CompileTemplatesHook(BuildHookInterface):
    def initialize(self, version: str, build_data: dict[str, Any]) -> None:
        if version != "standard":
            return
        # The same code that builds the templates' environment and reads the pack at run time prepares
        # them here; it needs jinja2, pydantic and PyYAML (build requirements).
        sys.path.insert(0, self.root)
        try:
            from notegen.assess.management_file import prepare_considerations
            from notegen.knowledge import prepare_knowledge
            from notegen.knowledge.prepared_pack import SHIPPED_PACKS, prepare_pack
            from notegen.render.template_build import compile_templates
        finally:
            sys.path.remove(self.root)
        self._scratch = Path(tempfile.mkdtemp(prefix="notegen-templates-"))
        compile_templates(Path(self.root) / "templates", self._scratch)
        build_data["force_include"][str(self._scratch)] = COMPILED_IN_WHEEL
        self._packs = Path(tempfile.mkdtemp(prefix="notegen-packs-"))
        here = os.getcwd()
        os.chdir(self.root)  # the pack is read as `rules/<name>`, so no build folder is recorded in it
        try:
            for name in SHIPPED_PACKS:
                prepare_pack(Path("rules") / name, self._packs, name)
            prepare_considerations(Path("rules"), self._packs)
            prepare_knowledge(Path("rules"), self._packs)
        finally:
            os.chdir(here)
        build_data["force_include"][str(self._packs)] = PACKS_IN_WHEEL

    def finalize(self, version: str, build_data: dict[str, Any], artifact_path: str) -> None:
        for scratch in (getattr(self, "_scratch", None), getattr(self, "_packs", None)):
            if scratch is not None:
                shutil.rmtree(scratch, ignore_errors=True)
