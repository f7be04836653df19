"""Wheel build hook: compile the shipped note templates once, at build time, instead of in every process.

The modules land in the wheel at `notegen/_data/templates_compiled/`, with a manifest that lets
an installed notegen tell whether they still match its jinja2 and its templates (see
`notegen/render/compiled_templates.py`). An editable install reads the templates from the
checkout and compiles them as it always has, so it gets none.
"""

from __future__ import annotations

import shutil
import sys
import tempfile
from pathlib import Path
from typing import Any

from hatchling.builders.hooks.plugin.interface import BuildHookInterface

COMPILED_IN_WHEEL = "notegen/_data/templates_compiled"


class CompileTemplatesHook(BuildHookInterface):
    def initialize(self, version: str, build_data: dict[str, Any]) -> None:
        if version != "standard":
            return
        # The same code that builds the templates' environment at run time compiles them here;
        # importing it needs only jinja2 (a build requirement), not notegen's other dependencies.
        sys.path.insert(0, self.root)
        try:
            from notegen.render.template_build import compile_templates
        finally:
            sys.path.remove(self.root)
        self._scratch = Path(tempfile.mkdtemp(prefix="notegen-templates-"))
        compile_templates(Path(self.root) / "templates", self._scratch)
        build_data["force_include"][str(self._scratch)] = COMPILED_IN_WHEEL

    def finalize(self, version: str, build_data: dict[str, Any], artifact_path: str) -> None:
        scratch = getattr(self, "_scratch", None)
        if scratch is not None:
            shutil.rmtree(scratch, ignore_errors=True)
