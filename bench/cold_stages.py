"""Where a single note's start-up goes: run the steps of `notegen draft CASE --format text` in order, timed.

    python bench/cold_stages.py samples/gastric_suction.yaml     # prints one JSON object, milliseconds

Run in a fresh interpreter each time (bench/run.py does, and takes medians): each step is charged
with the imports and one-off work it is the first to need, as in the real command.
"""

from __future__ import annotations

import json
import sys
import time

started = time.perf_counter()
stages: dict[str, float] = {}


def lap(name: str) -> None:
    global started
    now = time.perf_counter()
    stages[name] = (now - started) * 1e3
    started = now


import jinja2  # noqa: E402, F401
import pydantic  # noqa: E402, F401
import yaml  # noqa: E402, F401

lap("floor imports (pydantic, jinja2, yaml)")
from pydantic import BaseModel  # noqa: E402, F401

lap("pydantic BaseModel (pydantic's own package import is lazy)")
import importlib.metadata  # noqa: E402, F401

lap("importlib.metadata (pydantic looks up plugins on the first model)")
from notegen.cli.app import _plain_draft_arguments  # noqa: E402

arguments = _plain_draft_arguments(["draft", sys.argv[1], "--format", "text"])
lap("notegen.cli.app, reading the arguments")
from notegen.pipeline import Drafter, DraftOptions  # noqa: E402

lap("import the models, calculations and acid-base reading")
from notegen.intake.read import read_case  # noqa: E402

case = read_case(sys.argv[1])
lap("read and validate the case file")
drafter = Drafter()
settings = drafter.settings
lap("acid-base settings (rules/acid_base.yaml)")
pack = drafter.alkalosis_pack
lap("rule pack: import the engine; the spec prepared at build time (else the YAML read and checked); compile")
from notegen.acidbase.calculations import compute_calculations  # noqa: E402
from notegen.acidbase.reading import read_acid_base  # noqa: E402
from notegen.workup.alkalosis import evaluate_alkalosis  # noqa: E402

calculations = compute_calculations(case, settings)
reading = read_acid_base(case, settings)
rules = evaluate_alkalosis(case, reading, pack, calculations=calculations)
lap("calculations, acid-base reading, rule walk")
assessment = drafter.assess(case)
lap("assessment: paragraph and management (rules/management.yaml)")
options = DraftOptions(output_format="text")
from notegen.note.writer import render_markdown  # noqa: E402

markdown = render_markdown(assessment, options)
lap("Markdown from the Jinja2 templates (precompiled in a wheel; compiled on first use in a checkout)")
from notegen.render.text import markdown_to_text  # noqa: E402

markdown_to_text(markdown, width=options.width, ascii_only=options.ascii_only)
lap("plain text from the Markdown")
print(json.dumps(stages))
