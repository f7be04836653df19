"""The shipped note templates compiled to Python modules when the wheel is built, and their loader.

Compiling the shipped templates from source costs tens of milliseconds in every process that
renders a note; importing modules compiled beforehand costs a few. `hatch_build.py` calls
`compile_templates` while building the wheel, with the very environment the shipped templates run
in (`notegen.render.templating.new_environment`: the same settings, `finalize` and filters, which
jinja2 consults while compiling), and the wheel carries the modules in
`notegen/_data/templates_compiled/` beside a manifest: the jinja2 version that compiled them and the
SHA-256 of each template's source.

`compiled_loader` returns a loader for them only when the running jinja2 is that version and every
template listed still has that source; otherwise None, and the templates are compiled from source
as in a source checkout. The caller uses them only for the shipped folder outside the sandbox.
"""

from __future__ import annotations

import hashlib
import json
import os
from collections.abc import MutableMapping
from pathlib import Path
from typing import Any

import jinja2
from jinja2.loaders import split_template_path

MANIFEST = "manifest.json"
FORMAT = 1  # of the manifest


def compiled_loader(source: Path, compiled: Path) -> jinja2.BaseLoader | None:
    """A loader of the modules in `compiled`, if they match the running jinja2 and `source`; else None.

    Hashing the sources reads each shipped template once per process (well under a millisecond);
    it is what keeps an edited template from being rendered from its old compiled code.
    """
    try:
        manifest = json.loads((compiled / MANIFEST).read_text(encoding="utf-8"))
        templates = manifest["templates"]
        if manifest["format"] != FORMAT or manifest["jinja2"] != jinja2.__version__:
            return None
        for name, digest in templates.items():
            if template_digest(source, name) != digest:
                return None
    except (OSError, ValueError, KeyError, TypeError, AttributeError):
        return None
    return ShippedModuleLoader(compiled, source, frozenset(templates))


def template_digest(source: Path, name: str) -> str:
    return hashlib.sha256(source.joinpath(*split_template_path(name)).read_bytes()).hexdigest()


class ShippedModuleLoader(jinja2.ModuleLoader):
    """The compiled modules of the templates listed in the manifest, named after their source files.

    Each template keeps the file name `FileSystemLoader` gives it, so a failing template is reported
    at its source file and line (jinja2 rewrites tracebacks with the template's `filename`).
    """

    def __init__(self, compiled: Path, source: Path, names: frozenset[str]) -> None:
        super().__init__(compiled)
        self.source = source
        self.names = names

    def load(
        self, environment: jinja2.Environment, name: str, globals: MutableMapping[str, Any] | None = None
    ) -> jinja2.Template:
        if name not in self.names:
            raise jinja2.TemplateNotFound(name)
        template = super().load(environment, name, globals)
        template.filename = os.path.normpath(os.path.join(str(self.source), *split_template_path(name)))
        return template
