"""Hostile and heavy input: refused quickly in bounded memory, nothing executed, nothing lost.

Memory is measured with tracemalloc and held to generous bounds; time is not asserted
(timing belongs in bench/), but every refusal here stops at a size, depth or count limit.
"""

from __future__ import annotations

import io
import json
import socket
import sys
import tracemalloc
from collections.abc import Callable, Iterator
from html.parser import HTMLParser
from pathlib import Path
from typing import Any

import pytest
import yaml
from typer.testing import CliRunner

from notegen.case.model import Case
from notegen.cli.app import app
from notegen.cli.batch import run_batch, write_atomically
from notegen.errors import CaseFileError, NotegenError, UsageError
from notegen.intake.files import MAX_BYTES, MAX_DEPTH, MAX_YAML_CHARS, MAX_YAML_NODES, parse_text
from notegen.intake.read import read_case
from notegen.pipeline import Drafter, DraftOptions

ROOT = Path(__file__).parent.parent
SAMPLES = sorted((ROOT / "samples").glob("*.yaml"))
FHIR_BUNDLE = ROOT / "tests" / "fixtures" / "inputs" / "bundle_full.json"
FORMATS = ("markdown", "text", "html", "json")
MEMORY_BOUND = 30_000_000  # bytes; each refusal below stays under 5 MB in practice
runner = CliRunner()


def _peak_memory(action: Callable[[], object]) -> tuple[int, BaseException | None]:
    """Peak bytes allocated while `action` runs, and the error it raised."""
    tracemalloc.start()
    try:
        action()
        error = None
    except BaseException as caught:  # noqa: BLE001 - handed back to the test to assert on
        error = caught
    finally:
        _, peak = tracemalloc.get_traced_memory()
        tracemalloc.stop()
    return peak, error


@pytest.fixture(scope="module", autouse=False)
def warmed() -> None:
    # Import and cache everything once, so tracemalloc sees only the work on the hostile file.
    read_case(str(SAMPLES[0]))


# --- Size, depth and expansion limits ---------------------------------------------------------------

ALIAS_BOMB = "\n".join(
    [
        'a: &a ["lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol"]',
        *(f"{chr(98 + i)}: &{chr(98 + i)} [{', '.join([f'*{chr(97 + i)}'] * 9)}]" for i in range(8)),
    ]
)  # nine to the ninth power (387 million) strings if the aliases were expanded

HOSTILE_TEXTS: list[tuple[str, str, str]] = [
    ("yaml-alias-bomb", ALIAS_BOMB, "YAML aliases (*name) are not allowed in a case file"),
    ("yaml-flow-nesting-250k", "case: " + "[" * (MAX_YAML_CHARS - 10), f"nested more than {MAX_DEPTH} levels deep"),
    (
        "yaml-block-nesting-300",
        "".join(" " * i + "a:\n" for i in range(300)) + " " * 300 + "b: 1\n",
        f"nested more than {MAX_DEPTH} levels deep",
    ),
    ("json-nesting-1900k", "[" * (MAX_BYTES - 100_000), "nested more than 40 levels deep"),
    ("json-objects-nesting", '{"a": ' * 100_000 + "1" + "}" * 100_000, "nested more than 40 levels deep"),
    ("yaml-over-size-limit", "case: " + "x" * MAX_YAML_CHARS + "\n", "too large for a YAML case file"),
    (
        "yaml-too-many-values",
        "context:\n  meds: [" + ", ".join(["a"] * (MAX_YAML_NODES + 10)) + "]\n",
        f"holds more than {MAX_YAML_NODES:,} values",
    ),
]


@pytest.mark.parametrize(("text", "message"), [h[1:] for h in HOSTILE_TEXTS], ids=[h[0] for h in HOSTILE_TEXTS])
def test_hostile_text_is_refused_in_bounded_memory(text: str, message: str, warmed: None, tmp_path: Path) -> None:
    path = tmp_path / ("case.json" if text.startswith(("[", "{")) else "case.yaml")
    path.write_text(text, encoding="utf-8")
    peak, error = _peak_memory(lambda: read_case(str(path)))
    assert isinstance(error, CaseFileError), repr(error)
    assert message in str(error)
    assert peak < MEMORY_BOUND + 3 * len(text), f"peak {peak:,} bytes"


def test_a_file_over_the_byte_limit_is_refused_after_reading_one_byte_too_many(warmed: None, tmp_path: Path) -> None:
    path = tmp_path / "big.json"
    with path.open("wb") as stream:
        stream.truncate(50 * MAX_BYTES)  # 100 MB of zero bytes, sparse on disk
    peak, error = _peak_memory(lambda: read_case(str(path)))
    assert str(error) == f"{path}: more than 2,000,000 bytes is too large for a case file"
    assert peak < 3 * MAX_BYTES


def test_an_endless_device_is_refused(warmed: None) -> None:
    if not Path("/dev/zero").exists():
        pytest.skip("no /dev/zero on this system")
    peak, error = _peak_memory(lambda: read_case("/dev/zero"))
    assert str(error) == "/dev/zero: more than 2,000,000 bytes is too large for a case file"
    assert peak < 3 * MAX_BYTES


def test_the_alias_bomb_would_really_explode_under_a_plain_loader() -> None:
    # The bomb above is a real one: plain safe_load builds its first levels (checked at a small size).
    small = ALIAS_BOMB.split("\n")[:4]
    data = yaml.safe_load("\n".join(small))
    assert len(data["d"]) == 9 and len(data["d"][0]) == 9 and len(data["d"][0][0]) == 9


# --- YAML tags that build Python objects --------------------------------------------------------------

PYTHON_TAGS = [
    "!!python/object/apply:os.system ['touch {marker}']",
    "!!python/object/new:subprocess.Popen [['touch', '{marker}']]",
    "!!python/name:os.system",
    "!!python/module:os",
    "!!python/tuple [1, 2]",
    "!<tag:yaml.org,2002:python/object/apply:os.system> ['touch {marker}']",
    "!!binary dG91Y2g=",
]


@pytest.mark.parametrize("tag", PYTHON_TAGS, ids=[t.split()[0].split(":")[-1].strip("!<>") for t in PYTHON_TAGS])
def test_python_object_tags_are_refused_and_nothing_runs(tag: str, tmp_path: Path) -> None:
    marker = tmp_path / "ran"
    path = tmp_path / "case.yaml"
    path.write_text(f"case: {tag.format(marker=marker)}\ngas: {{ph: 7.5, pco2: 48}}\n", encoding="utf-8")
    result = runner.invoke(app, ["draft", str(path)])
    assert result.exit_code == 2
    assert result.stderr.startswith(f"notegen: {path}, line 1, column 7: not valid YAML: YAML tags (")
    assert result.stdout == ""
    assert not marker.exists()


# --- Template syntax and markup in case text --------------------------------------------------------

LABEL = "{{ 7*7 }} {% for x in range(3) %}loop{% endfor %} <script>alert(1)</script> <img src=x onerror=alert(2)> **b**"
MEDS = ["{{ config.items() }}", "<b>furosemide</b>", "[link](javascript:alert(3))", "{% raw %}x"]
FINDINGS = ["{# hidden #}vomiting", "<iframe src=//x></iframe>"]
HOSTILE_CASE = {
    "case": LABEL,
    "patient": {"age": 61, "sex": "female", "weight_kg": 70},
    "gas": {"sample": "arterial", "ph": 7.5, "pco2": 48, "hco3": 36},
    "chem": {"na": 136, "k": 3.0, "cl": 90, "albumin": 3.8},
    "urine": {"cl": "<10 mmol/L"},
    "context": {"bp": "110/70", "volume": "low", "meds": MEDS, "findings": FINDINGS},
}


class _Elements(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.tags: list[str] = []
        self.handlers: list[str] = []
        self.text: list[str] = []

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        self.tags.append(tag)
        self.handlers += [name for name, _ in attrs if name.startswith("on")]
        self.handlers += [name for name, value in attrs if value and value.strip().lower().startswith("javascript:")]

    def handle_data(self, data: str) -> None:
        self.text.append(data)


def _draft_hostile(tmp_path: Path, output_format: str, *extra: str) -> str:
    path = tmp_path / "hostile.json"
    path.write_text(json.dumps(HOSTILE_CASE), encoding="utf-8")
    # the worksheet too, so that every piece of case text (labels, medications, findings) is shown
    shown = ["--width", "400"] if output_format == "text" else [] if output_format == "json" else ["--worksheet"]
    result = runner.invoke(app, ["draft", str(path), "--format", output_format, *shown, *extra])
    assert result.exit_code == 0, result.stderr
    return result.stdout


@pytest.mark.parametrize("explain", [False, True], ids=["plain", "explain"])
def test_case_text_is_inert_in_markdown(tmp_path: Path, explain: bool) -> None:
    from markdown_it import MarkdownIt

    note = _draft_hostile(tmp_path, "markdown", *(["--explain"] if explain else []))
    tokens = MarkdownIt("commonmark").enable("table").parse(note)
    kinds = {t.type for t in tokens} | {c.type for t in tokens for c in (t.children or [])}
    assert not kinds & {"html_inline", "html_block", "link_open", "image"}
    assert "looploop" not in note and "<class" not in note and "dict_items" not in note
    assert "{{ 7\\*7 }}" in note and "{% for x in range(3) %}loop{% endfor %}" in note


def test_case_text_is_inert_in_plain_text(tmp_path: Path) -> None:
    text = " ".join(_draft_hostile(tmp_path, "text").split())
    # plain text shows the user's text exactly as typed: nothing evaluated, nothing dropped
    assert LABEL in text
    for name in MEDS:
        assert name in text
    assert "looploop" not in text and "dict_items" not in text


def test_case_text_is_inert_in_html(tmp_path: Path) -> None:
    page = _draft_hostile(tmp_path, "html")
    elements = _Elements()
    elements.feed(page)
    assert not {"script", "img", "iframe", "a"} & set(elements.tags)
    assert elements.handlers == []
    shown = " ".join("".join(elements.text).split())
    assert LABEL in shown and "<b>furosemide</b>" in shown
    assert "looploop" not in page


def test_case_text_is_kept_exactly_in_json(tmp_path: Path) -> None:
    data = json.loads(_draft_hostile(tmp_path, "json"))
    assert data["case"]["label"] == LABEL
    assert [m["name"] for m in data["case"]["context"]["meds"]] == MEDS
    assert "looploop" not in json.dumps(data)


def test_case_text_given_with_set_is_inert(tmp_path: Path) -> None:
    base = tmp_path / "base.yaml"
    base.write_text("gas: {sample: arterial, ph: 7.5, pco2: 48, hco3: 36}\n", encoding="utf-8")
    result = runner.invoke(app, ["draft", str(base), "--set", "case={{ 6*7 }}", "--format", "text"])
    assert result.exit_code == 0, result.stderr
    assert "{{ 6*7 }}" in result.stdout and "42" not in result.stdout


# --- A service template reaching for Python internals -----------------------------------------------

SANDBOX_ESCAPES = [
    (
        "class-mro-subclasses",
        "# Our note\n{{ ''.__class__.__mro__[1].__subclasses__() }}\n",
        "line 2: refused by the sandbox: access to attribute '__class__' of 'str' object is unsafe.",
    ),
    (
        "function-globals",
        "{{ lipsum.__globals__['os'].system('true') }}\n",
        "line 1: refused by the sandbox: access to attribute '__globals__' of 'function' object is unsafe.",
    ),
    (
        "template-self-init",
        "{{ self.__init__.__globals__ }}\n",
        "line 1: refused by the sandbox: access to attribute '__init__' of 'TemplateReference' object is unsafe.",
    ),
    (
        "format-string-attribute",
        "{{ '{0.__class__}'.format(title) }}\n",
        "line 1: refused by the sandbox: access to attribute '__class__' of 'str' object is unsafe.",
    ),
    (
        "change-the-assessment",
        "{% set _ = assessment.update({'paragraph': 'forged'}) %}{{ paragraph }}\n",
        "line 1: refused by the sandbox: access to attribute 'update' of 'dict' object is unsafe.",
    ),
]


@pytest.mark.parametrize(("source", "message"), [s[1:] for s in SANDBOX_ESCAPES], ids=[s[0] for s in SANDBOX_ESCAPES])
def test_service_template_cannot_reach_python_internals(tmp_path: Path, source: str, message: str) -> None:
    template = tmp_path / "ours.md.j2"
    template.write_text(source, encoding="utf-8")
    result = runner.invoke(app, ["draft", str(SAMPLES[0]), "--template", str(template)])
    assert result.exit_code == 2, result.stdout
    assert result.stderr == f"notegen: {template.resolve()}, {message}\n"
    assert result.stdout == ""


def test_service_template_cannot_include_files_outside_its_folders(tmp_path: Path) -> None:
    template = tmp_path / "ours.md.j2"
    template.write_text("{% include '../../../../etc/passwd' %}\n", encoding="utf-8")
    result = runner.invoke(app, ["draft", str(SAMPLES[0]), "--template", str(template)])
    assert result.exit_code == 2
    assert "template '../../../../etc/passwd' not found" in result.stderr
    assert "root:" not in result.stdout + result.stderr


# --- No network -----------------------------------------------------------------------------------------


@pytest.fixture()
def no_network(monkeypatch: pytest.MonkeyPatch) -> Iterator[list[str]]:
    """Every way out to the network raises, and is recorded, for this test only."""
    attempts: list[str] = []

    def refuse(name: str) -> Callable[..., Any]:
        def blocked(*args: object, **kwargs: object) -> Any:
            attempts.append(name)
            raise OSError(f"network access attempted: {name}")

        return blocked

    for name in ("connect", "connect_ex", "sendto", "sendmsg"):
        monkeypatch.setattr(socket.socket, name, refuse(f"socket.{name}"))
    for name in ("create_connection", "getaddrinfo", "gethostbyname"):
        monkeypatch.setattr(socket, name, refuse(name))
    yield attempts


def test_the_network_block_works(no_network: list[str]) -> None:
    with pytest.raises(OSError, match="network access attempted"):
        socket.create_connection(("192.0.2.1", 80), timeout=0.01)
    with socket.socket() as sock, pytest.raises(OSError, match="network access attempted"):
        sock.connect(("192.0.2.1", 80))
    assert no_network == ["create_connection", "socket.connect"]


@pytest.mark.parametrize("output_format", FORMATS)
def test_every_sample_drafts_without_the_network(no_network: list[str], output_format: str) -> None:
    context_only = ROOT / "samples" / "with_paste" / "context_only.yaml"
    for source in [*SAMPLES, FHIR_BUNDLE, context_only]:
        # the context-only sample holds no measured value: it is drafted with its paste, as the README shows
        paste = ["--paste", str(ROOT / "samples" / "pasted_labs.txt")] if source == context_only else []
        for extra in ([], ["--explain"], [] if output_format == "json" else ["--brief"]):
            result = runner.invoke(app, ["draft", str(source), "--format", output_format, *paste, *extra])
            assert result.exit_code == 0, f"{source.name} {extra}: {result.stderr}"
            assert result.stdout.strip()
    assert no_network == []


def test_schemas_print_without_the_network(no_network: list[str]) -> None:
    for kind in ("case", "output"):
        result = runner.invoke(app, ["schema", kind])
        assert result.exit_code == 0, result.stderr
        json.loads(result.stdout)
    assert no_network == []


# --- Batch resilience ------------------------------------------------------------------------------------

GOOD = "case: good\ngas: {sample: arterial, ph: 7.49, pco2: 48, hco3: 36}\nchem: {na: 136, k: 3.2, cl: 91}\n"


def _leftovers(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir() if p.name.startswith(".") or p.name.endswith(".part"))


def test_batch_drafts_the_good_cases_and_reports_each_bad_one(tmp_path: Path) -> None:
    cases = tmp_path / "ward"
    cases.mkdir()
    (cases / "bed01.yaml").write_text(GOOD, encoding="utf-8")
    (cases / "bed02.yaml").write_text("gas: {ph: 7.49, pco2: [48\n", encoding="utf-8")
    (cases / "bed03.json").write_text(json.dumps({"gas": {"ph": 7.49, "pco2": 48, "hco3": 36}}), encoding="utf-8")
    (cases / "bed04.yaml").write_text("chem: {k: 25}\n", encoding="utf-8")
    (cases / "bed05.yml").write_bytes(b"case: \xff\n")
    (cases / "readme.txt").write_text("not a case", encoding="utf-8")
    out = tmp_path / "notes"
    result = runner.invoke(app, ["draft", str(cases), "--out", str(out)])
    assert result.exit_code == 2
    assert result.stderr.splitlines() == [
        f"notegen: {cases}/bed02.yaml, line 2, column 1: not valid YAML: expected ',' or ']', but got '<stream end>'",
        f"notegen: {cases}/bed04.yaml: field `chem.k`: 25 mmol/L is not a plausible potassium "
        "(expected 1 to 10 mmol/L)",
        f"notegen: {cases}/bed05.yml, line 1: not UTF-8 text (byte 0xff); save the file as UTF-8",
        "notegen: 2 drafted, 3 rejected",
    ]
    assert sorted(p.name for p in out.iterdir()) == ["bed01.md", "bed03.md"]
    assert (out / "bed01.md").read_text(encoding="utf-8").startswith("# Acid-base assessment")
    assert _leftovers(out) == [] and result.stdout == ""


def test_batch_never_writes_two_cases_to_one_note(tmp_path: Path) -> None:
    cases = tmp_path / "ward"
    cases.mkdir()
    (cases / "bed01.yaml").write_text(GOOD, encoding="utf-8")
    (cases / "bed01.json").write_text(json.dumps({"case": "other", "gas": {"ph": 7.3, "pco2": 30}}), encoding="utf-8")
    out = tmp_path / "notes"
    result = runner.invoke(app, ["draft", str(cases), "--out", str(out), "--format", "json"])
    assert result.exit_code == 2
    assert result.stderr.splitlines() == [
        f"notegen: {cases}/bed01.yaml: its note would overwrite the note of {cases}/bed01.json (bed01.json); "
        "rename one of the two cases",
        "notegen: 1 drafted, 1 rejected",
    ]
    assert json.loads((out / "bed01.json").read_text(encoding="utf-8"))["case"]["label"] == "other"


def test_batch_reports_a_folder_without_cases(tmp_path: Path) -> None:
    empty = tmp_path / "empty"
    empty.mkdir()
    result = runner.invoke(app, ["draft", str(empty), "--out", str(tmp_path / "notes")])
    assert result.exit_code == 2
    assert result.stderr.splitlines() == [
        f"notegen: {empty}: no case files (.yaml, .yml, .json) in this folder",
        "notegen: 0 drafted, 1 rejected",
    ]


def test_json_lines_batch_reports_each_bad_line(tmp_path: Path) -> None:
    good = json.dumps({"case": "line one", "gas": {"ph": 7.49, "pco2": 48, "hco3": 36}})
    lines = [
        good.encode(),
        b'{"case": "\xff"}',
        b"[" * 100 + b"]" * 100,
        b'{"chem": {"na": 132, "na": 140}}',
        b'{"chem": {"na": ' + b"9" * 5000 + b"}}",
        b'{"gas": {"ph": 7.4,}}',
        b"",
        b'["not", "a", "case"]',
        good.replace("line one", "line nine").encode(),
    ]
    path = tmp_path / "cases.jsonl"
    path.write_bytes(b"\n".join(lines) + b"\n")
    result = runner.invoke(app, ["draft", str(path), "--jsonl", "--format", "json"])
    assert result.exit_code == 2
    # one result per input line, in order: a note for the two good lines, an error for every other
    rows = [json.loads(line) for line in result.stdout.splitlines()]
    assert [row["input"]["line"] for row in rows] == list(range(1, 10))
    assert [row["case"]["label"] for row in rows if "case" in row] == ["line one", "line nine"]
    assert [row["input"]["line"] for row in rows if "error" in row] == [2, 3, 4, 5, 6, 7, 8]
    assert rows[5]["error"]["message"].startswith(f"{path}:6, column 20: not valid JSON")
    assert result.stderr.splitlines() == [
        f"notegen: {path}:2: not UTF-8 text (byte 0xff); save the file as UTF-8",
        f"notegen: {path}:3: nested more than {MAX_DEPTH} levels deep",
        f"notegen: {path}:4: not valid JSON: `na` is given twice; keep one value",
        f"notegen: {path}:5: not valid JSON: a number with 5,000 digits cannot be a lab value",
        f"notegen: {path}:6, column 20: not valid JSON: Expecting property name enclosed in double quotes",
        f"notegen: {path}:8: a case file is a mapping of sections (case, units, dates, patient, gas, chem, urine, "
        "context), but this one holds a list",
        "notegen: 2 drafted, 6 rejected (1 blank line skipped)",
    ]


def test_json_lines_file_that_cannot_be_read_is_reported_and_the_rest_drafted(tmp_path: Path) -> None:
    path = tmp_path / "cases.jsonl"
    path.write_text(json.dumps({"case": "only", "gas": {"ph": 7.49, "pco2": 48}}) + "\n", encoding="utf-8")
    missing = tmp_path / "missing.jsonl"
    result = runner.invoke(app, ["draft", str(missing), str(path), "--jsonl", "--format", "json"])
    assert result.exit_code == 2
    assert result.stderr.splitlines() == [
        f"notegen: {missing}: cannot be read (No such file or directory)",
        "notegen: 1 drafted, 1 rejected",
    ]
    missing_row, only = (json.loads(line) for line in result.stdout.splitlines())
    assert missing_row["input"] == {"file": str(missing), "line": None, "label": None}
    assert missing_row["error"]["message"] == f"{missing}: cannot be read (No such file or directory)"
    assert only["case"]["label"] == "only" and only["input"] == {"file": str(path), "line": 1, "label": "only"}


class _FailingDrafter(Drafter):
    """A drafter with a bug that shows on one case only."""

    def draft(self, case: Case, options: DraftOptions | None = None) -> str:
        if case.label == "trips a bug":
            raise RuntimeError("simulated defect")
        return super().draft(case, options)


def test_batch_survives_an_unexpected_error_in_one_case(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    cases = tmp_path / "ward"
    cases.mkdir()
    (cases / "a.yaml").write_text(GOOD.replace("case: good", "case: trips a bug"), encoding="utf-8")
    (cases / "b.yaml").write_text(GOOD, encoding="utf-8")
    out = tmp_path / "notes"
    status = run_batch(
        [str(cases)], _FailingDrafter(), DraftOptions(), out_dir=out, jsonl=False, window_hours=24.0
    )
    assert status == 1
    assert capsys.readouterr().err.splitlines() == [
        f"notegen: {cases}/a.yaml: unexpected error (RuntimeError): simulated defect. "
        "Please report this with the input that caused it.",
        "notegen: 1 drafted, 0 rejected, 1 failed unexpectedly",
    ]
    assert sorted(p.name for p in out.iterdir()) == ["b.md"]


def test_batch_reads_standard_input_only_up_to_the_size_limit(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    good = tmp_path / "bed01.yaml"
    good.write_text(GOOD, encoding="utf-8")
    piped = io.BytesIO(b"case: x\n" * 1_000_000)  # 8 MB on standard input
    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(piped))
    status = run_batch([str(good), "-"], Drafter(), DraftOptions(), out_dir=None, jsonl=False, window_hours=24.0)
    assert status == 2
    assert capsys.readouterr().err.splitlines() == [
        "notegen: <stdin>: more than 2,000,000 bytes is too large for a case file",
        "notegen: 1 drafted, 1 rejected",
    ]
    assert piped.tell() <= MAX_BYTES + 1 + io.DEFAULT_BUFFER_SIZE  # the rest was never read


def test_a_failed_write_leaves_neither_a_partial_note_nor_a_temporary_file(tmp_path: Path) -> None:
    target = tmp_path / "note.md"
    target.write_text("the earlier note\n", encoding="utf-8")
    # a lone surrogate cannot be encoded: the write fails after the temporary file was opened
    with pytest.raises(UnicodeEncodeError):
        write_atomically(target, "a new note that fails half way \ud800 here")
    assert target.read_text(encoding="utf-8") == "the earlier note\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["note.md"]


def test_writing_into_a_missing_folder_is_a_usage_error(tmp_path: Path) -> None:
    target = tmp_path / "no such folder" / "note.md"
    with pytest.raises(UsageError) as info:
        write_atomically(target, "text")
    assert str(info.value) == f"cannot write {target}: No such file or directory"
    result = runner.invoke(app, ["draft", str(SAMPLES[0]), "-o", str(target)])
    assert result.exit_code == 2 and result.stderr == f"notegen: cannot write {target}: No such file or directory\n"


def test_errors_are_notegen_errors_not_python_ones(tmp_path: Path) -> None:
    # every hostile text above fails as a NotegenError from the library too, never a bare Python error
    for _, text, _ in HOSTILE_TEXTS[:5]:
        with pytest.raises(NotegenError):
            parse_text(text, "case", max_depth=40)
