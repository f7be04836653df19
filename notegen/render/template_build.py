"""Compiling the shipped templates when the wheel is built (`hatch_build.py`); importing it needs only jinja2."""

from __future__ import annotations

import json
from pathlib import Path

import jinja2

from notegen.render.compiled_templates import FORMAT, MANIFEST, template_digest
from notegen.render.templating import new_environment

__all__ = ["compile_templates"]


def compile_templates(source: Path, target: Path) -> dict[str, str]:
    """Compile every `*.j2` template under `source` into modules in `target`, with the manifest.

    Returns the manifest's templates: name -> SHA-256 of the source. A template that does not
    compile stops the build (`jinja2.TemplateSyntaxError`).
    """
    environment = new_environment(jinja2.FileSystemLoader([str(source)]), sandboxed=False)
    target.mkdir(parents=True, exist_ok=True)
    environment.compile_templates(str(target), extensions=["j2"], zip=None, ignore_errors=False)
    digests = {name: template_digest(source, name) for name in environment.list_templates(extensions=["j2"])}
    manifest = {"format": FORMAT, "jinja2": jinja2.__version__, "templates": digests}
    (target / MANIFEST).write_text(json.dumps(manifest, indent=1, sort_keys=True) + "\n", encoding="utf-8")
    return digests
