"""The shipped templates compiled ahead (as the wheel's build hook does) render exactly as from source."""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
from pathlib import Path
from typing import Any

import jinja2
import pytest

import notegen
from notegen.errors import TemplateError
from notegen.intake.read import read_case
from notegen.note.writer import BRIEF_TEMPLATE, NOTE_TEMPLATE, note_context
from notegen.pipeline import Drafter, DraftOptions
from notegen.render import make_environment, markdown_to_html_page, markdown_to_text, render_template
from notegen.render.compiled_templates import MANIFEST, ShippedModuleLoader, compiled_loader
from notegen.render.template_build import compile_templates
from notegen.render.templating import shipped_environment
from notegen.resources import compiled_templates_dir, rules_dir, templates_dir

SAMPLES = sorted((Path(__file__).resolve().parents[2] / "samples").glob("*.yaml"))
OPTIONS = {"note": DraftOptions(), "explain": DraftOptions(explain=True), "brief": DraftOptions(brief=True)}


@pytest.fixture(scope="module")
def compiled(tmp_path_factory: pytest.TempPathFactory) -> Path:
    target = tmp_path_factory.mktemp("compiled")
    compile_templates(templates_dir(), target)
    return target


@pytest.fixture(scope="module")
def drafter() -> Drafter:
    return Drafter()


def test_the_compiled_environment_loads_every_template_from_its_module(compiled: Path) -> None:
    env = shipped_environment(templates_dir(), compiled)
    assert isinstance(env.loader, jinja2.ChoiceLoader)
    modules = env.loader.loaders[0]
    assert isinstance(modules, ShippedModuleLoader)
    names = json.loads((compiled / MANIFEST).read_text(encoding="utf-8"))["templates"]
    assert {NOTE_TEMPLATE, BRIEF_TEMPLATE, "parts/disclaimer_line.md.j2"} <= set(names)
    for name in names:
        template = env.get_template(name)
        assert Path(template.root_render_func.__code__.co_filename).parent == compiled, name
        # Named after its source file, as `FileSystemLoader` names it, so errors point there.
        assert template.filename == shipped_environment(templates_dir(), None).get_template(name).filename


@pytest.mark.parametrize("case_path", SAMPLES, ids=[path.stem for path in SAMPLES])
def test_every_sample_renders_the_same_from_compiled_templates(
    case_path: Path, compiled: Path, drafter: Drafter
) -> None:
    from_modules = shipped_environment(templates_dir(), compiled)
    from_source = shipped_environment(templates_dir(), None)
    assert isinstance(from_source.loader, jinja2.FileSystemLoader)
    assessment = drafter.assess(read_case(str(case_path)), explain=True)
    for label, options in OPTIONS.items():
        context = note_context(assessment, options, with_assessment=False)
        name = BRIEF_TEMPLATE if options.brief else NOTE_TEMPLATE
        markdown = render_template(from_modules, name, context)
        assert markdown == render_template(from_source, name, context), label
        assert "Draft" in markdown or "draft" in markdown  # a note, not an empty string
        assert markdown_to_text(markdown) == markdown_to_text(render_template(from_source, name, context))
        assert markdown_to_html_page(markdown, title="t") == markdown_to_html_page(
            render_template(from_source, name, context), title="t"
        )


def _failing_contexts(drafter: Drafter) -> dict[str, dict[str, Any]]:
    context = note_context(drafter.assess(read_case(str(SAMPLES[0]))), DraftOptions(), with_assessment=False)
    missing = {k: v for k, v in context.items() if k != "chart_paragraph"}  # an undefined name in note.md.j2
    printed_none = {**context, "management": [None]}  # a None printed inside parts/management.md.j2
    return {"undefined": missing, "none": printed_none}


@pytest.mark.parametrize("kind", ["undefined", "none"])
def test_errors_name_the_same_template_file_and_line(kind: str, compiled: Path, drafter: Drafter) -> None:
    context = _failing_contexts(drafter)[kind]
    messages = []
    for env in (shipped_environment(templates_dir(), compiled), shipped_environment(templates_dir(), None)):
        with pytest.raises(TemplateError) as caught:
            render_template(env, NOTE_TEMPLATE, context)
        messages.append(str(caught.value))
    assert messages[0] == messages[1]
    assert messages[0].startswith(str(templates_dir())) and ", line " in messages[0], messages[0]


def _copy(compiled: Path, folder: Path) -> Path:
    shutil.copytree(compiled, folder)
    return folder


def test_another_jinja2_version_falls_back_to_the_sources(compiled: Path, tmp_path: Path) -> None:
    stale = _copy(compiled, tmp_path / "compiled")
    manifest = json.loads((stale / MANIFEST).read_text(encoding="utf-8"))
    assert compiled_loader(templates_dir(), stale) is not None
    manifest["jinja2"] = "3.0.0" if jinja2.__version__ != "3.0.0" else "3.1.0"
    (stale / MANIFEST).write_text(json.dumps(manifest), encoding="utf-8")
    assert compiled_loader(templates_dir(), stale) is None
    assert isinstance(shipped_environment(templates_dir(), stale).loader, jinja2.FileSystemLoader)


def test_an_edited_template_falls_back_to_the_sources(compiled: Path, tmp_path: Path) -> None:
    sources = tmp_path / "templates"
    shutil.copytree(templates_dir(), sources)
    own = compile_templates(sources, tmp_path / "compiled")
    assert compiled_loader(sources, tmp_path / "compiled") is not None
    part = sources / "parts" / "disclaimer_line.md.j2"
    assert "parts/disclaimer_line.md.j2" in own
    part.write_text(part.read_text(encoding="utf-8") + "Edited after the build.\n", encoding="utf-8")
    assert compiled_loader(sources, tmp_path / "compiled") is None
    env = shipped_environment(sources, tmp_path / "compiled")
    assert isinstance(env.loader, jinja2.FileSystemLoader)
    context = {"disclaimer": "Draft.", "cautions": []}
    assert "Edited after the build." in render_template(env, "parts/disclaimer_line.md.j2", context)
    part.unlink()  # a template of the manifest that is gone
    assert compiled_loader(sources, tmp_path / "compiled") is None


def test_a_template_added_after_the_build_is_compiled_from_source(compiled: Path, tmp_path: Path) -> None:
    sources = tmp_path / "templates"
    shutil.copytree(templates_dir(), sources)
    compile_templates(sources, tmp_path / "compiled")
    (sources / "parts" / "extra.md.j2").write_text("extra {{ 1 + 1 }}\n", encoding="utf-8")
    env = shipped_environment(sources, tmp_path / "compiled")
    assert isinstance(env.loader, jinja2.ChoiceLoader)
    assert render_template(env, "parts/extra.md.j2", {}) == "extra 2\n"


@pytest.mark.parametrize("manifest", ["", "{", "[]", '{"format": 1}', '{"format": 99, "jinja2": "x", "templates": {}}'])
def test_a_missing_or_unreadable_manifest_falls_back(compiled: Path, tmp_path: Path, manifest: str) -> None:
    broken = _copy(compiled, tmp_path / "compiled")
    if manifest:
        (broken / MANIFEST).write_text(manifest, encoding="utf-8")
    else:
        (broken / MANIFEST).unlink()
    assert compiled_loader(templates_dir(), broken) is None


def test_a_template_that_does_not_compile_stops_the_build(tmp_path: Path) -> None:
    (tmp_path / "src").mkdir()
    (tmp_path / "src" / "bad.md.j2").write_text("{% if %}\n", encoding="utf-8")
    with pytest.raises(jinja2.TemplateSyntaxError):
        compile_templates(tmp_path / "src", tmp_path / "out")


def test_compiled_templates_only_for_the_shipped_folder_outside_the_sandbox(tmp_path: Path) -> None:
    shipped = make_environment([templates_dir()], sandboxed=False)
    if compiled_templates_dir() is None:  # a source checkout or an editable install
        assert isinstance(shipped.loader, jinja2.FileSystemLoader)
    else:  # an installed wheel
        assert isinstance(shipped.loader, jinja2.ChoiceLoader)
        assert isinstance(shipped.loader.loaders[0], ShippedModuleLoader)
    # jinja2 compiles `*` and `**` differently in the sandbox (to bound them), so never from these modules.
    for folders in ([templates_dir()], [tmp_path, templates_dir()]):
        assert isinstance(make_environment(folders, sandboxed=True).loader, jinja2.FileSystemLoader)
    assert isinstance(make_environment([tmp_path, templates_dir()], sandboxed=False).loader, jinja2.FileSystemLoader)


def test_an_installed_layout_drafts_every_sample_the_same_through_its_compiled_templates(
    tmp_path: Path, drafter: Drafter
) -> None:
    # notegen laid out as a wheel installs it (`_data/` with the compiled templates), run in a fresh
    # interpreter; its notes must equal this process's, in every format.
    site = tmp_path / "site"
    package = Path(notegen.__file__).resolve().parent
    shutil.copytree(package, site / "notegen", ignore=shutil.ignore_patterns("__pycache__", "_data"))
    shutil.copytree(rules_dir(), site / "notegen" / "_data" / "rules")
    shutil.copytree(templates_dir(), site / "notegen" / "_data" / "templates")
    compile_templates(site / "notegen" / "_data" / "templates", site / "notegen" / "_data" / "templates_compiled")
    script = (
        "import json, sys\n"
        "from notegen.pipeline import Drafter, DraftOptions\n"
        "from notegen.intake.read import read_case\n"
        "from notegen.render import make_environment\n"
        "from notegen.resources import templates_dir\n"
        "loader = make_environment([templates_dir()], sandboxed=False).loader\n"
        "sandboxed = make_environment([templates_dir()], sandboxed=True).loader\n"
        "drafter = Drafter()\n"
        "notes = {f'{p}|{f}|{b}': drafter.draft(read_case(p), DraftOptions(output_format=f, brief=b))\n"
        "         for p in sys.argv[1:] for f in ('markdown', 'text', 'html') for b in (False, True)}\n"
        "names = {'loaders': [type(l).__name__ for l in loader.loaders], 'sandboxed': type(sandboxed).__name__}\n"
        "print(json.dumps({**names, 'notes': notes}))\n"
    )
    env = {**os.environ, "PYTHONPATH": str(site)}
    result = subprocess.run(
        [sys.executable, "-c", script, *map(str, SAMPLES)], capture_output=True, text=True, env=env, cwd=tmp_path
    )
    assert result.returncode == 0, result.stderr
    installed = json.loads(result.stdout)
    assert installed["loaders"] == ["ShippedModuleLoader", "FileSystemLoader"]
    assert installed["sandboxed"] == "ContainedLoader"  # a file loader that keeps to the folders; never compiled code
    expected = {
        f"{path}|{fmt}|{brief}": drafter.draft(read_case(str(path)), DraftOptions(output_format=fmt, brief=brief))
        for path in SAMPLES
        for fmt in ("markdown", "text", "html")
        for brief in (False, True)
    }
    assert installed["notes"].keys() == expected.keys()
    for key, note in expected.items():
        assert installed["notes"][key] == note, key
