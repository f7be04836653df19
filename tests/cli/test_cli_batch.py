"""`notegen draft` on many cases: files, folders and JSON Lines, one note per case, a summary at the end."""

from __future__ import annotations

import io
import json
import shutil
from pathlib import Path

from typer.testing import CliRunner

from notegen.cli.app import app
from notegen.cli.batch import run_batch
from notegen.pipeline import Drafter, DraftOptions

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = sorted((ROOT / "samples").glob("*.yaml"))
GASTRIC = ROOT / "samples" / "gastric_suction.yaml"
THIAZIDE = ROOT / "samples" / "thiazide_and_vomiting.yaml"
CHRONIC = ROOT / "samples" / "chronic_co2_retention.yaml"
runner = CliRunner()


def _single(path: Path, *options: str) -> str:
    """The note `notegen draft` prints for one case, to compare a batch's notes with."""
    result = runner.invoke(app, ["draft", str(path), *options])
    assert result.exit_code == 0, result.output
    return result.stdout


def _leftovers(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir() if p.name.startswith(".") or p.name.endswith(".part"))


def _case_line(label: str, **sections: object) -> str:
    case = {"case": label, "gas": {"sample": "arterial", "ph": 7.49, "pco2": 48, "hco3": 36}}
    case.update(sections)
    return json.dumps(case)


def test_several_files_give_one_note_each_named_after_its_case(tmp_path: Path) -> None:
    out = tmp_path / "notes"
    result = runner.invoke(app, ["draft", str(GASTRIC), str(THIAZIDE), str(CHRONIC), "--out", str(out)])
    assert result.exit_code == 0, result.output
    assert result.stdout == ""
    assert result.stderr == "notegen: 3 drafted, 0 rejected\n"
    assert sorted(p.name for p in out.iterdir()) == [
        "chronic_co2_retention.md",
        "gastric_suction.md",
        "thiazide_and_vomiting.md",
    ]
    for path in (GASTRIC, THIAZIDE, CHRONIC):
        assert (out / f"{path.stem}.md").read_text(encoding="utf-8") == _single(path)


def test_a_folder_and_a_file_together_in_the_chosen_format(tmp_path: Path) -> None:
    ward = tmp_path / "ward"
    ward.mkdir()
    for path in SAMPLES[:3]:
        shutil.copy(path, ward / path.name)
    (ward / "notes.txt").write_text("not a case", encoding="utf-8")
    out = tmp_path / "notes"
    result = runner.invoke(app, ["draft", str(ward), str(GASTRIC), "--out", str(out), "--format", "text"])
    assert result.exit_code == 0, result.output
    assert result.stderr == "notegen: 4 drafted, 0 rejected\n"
    assert sorted(p.name for p in out.iterdir()) == sorted(
        [f"{p.stem}.txt" for p in SAMPLES[:3]] + ["gastric_suction.txt"]
    )
    assert (out / "gastric_suction.txt").read_text(encoding="utf-8") == _single(GASTRIC, "--format", "text")


def test_json_lines_from_a_file_give_one_json_result_per_line(tmp_path: Path) -> None:
    cases = tmp_path / "cases.jsonl"
    lines = [_case_line("bed 1"), "", _case_line("bed 2", chem={"na": 137, "k": 3.2, "cl": 91})]
    cases.write_text("\n".join(lines) + "\n", encoding="utf-8")
    result = runner.invoke(app, ["draft", "--jsonl", str(cases), "--format", "json"])
    assert result.exit_code == 0, result.output
    assert result.stderr == "notegen: 2 drafted, 0 rejected (1 blank line skipped)\n"
    rows = [json.loads(row) for row in result.stdout.splitlines()]
    assert [row["input"] for row in rows] == [
        {"file": str(cases), "line": 1, "label": "bed 1"},
        {"file": str(cases), "line": 2, "label": None},
        {"file": str(cases), "line": 3, "label": "bed 2"},
    ]
    assert rows[1]["error"] == {"message": f"{cases}:2: the line is empty; no case", "field": None, "line": 2}
    # each drafted line holds what `draft --format json` prints for that case alone, after its input
    single = tmp_path / "bed2.json"
    single.write_text(lines[2], encoding="utf-8")
    assert {k: v for k, v in rows[2].items() if k != "input"} == json.loads(_single(single, "--format", "json"))


def test_json_lines_from_standard_input(tmp_path: Path) -> None:
    text = _case_line("from a pipe") + "\n" + _case_line("second") + "\n"
    for arguments in (["draft", "--jsonl", "--format", "json"], ["draft", "--jsonl", "-", "--format", "json"]):
        result = runner.invoke(app, arguments, input=text)
        assert result.exit_code == 0, result.output
        assert [json.loads(row)["case"]["label"] for row in result.stdout.splitlines()] == ["from a pipe", "second"]
        assert result.stderr == "notegen: 2 drafted, 0 rejected\n"


def test_json_lines_into_a_folder_name_each_note_by_its_line(tmp_path: Path) -> None:
    cases = tmp_path / "census.jsonl"
    cases.write_text(_case_line("one") + "\n\n" + _case_line("three") + "\n", encoding="utf-8")
    out = tmp_path / "notes"
    result = runner.invoke(app, ["draft", "--jsonl", str(cases), "--out", str(out)])
    assert result.exit_code == 0, result.output
    assert sorted(p.name for p in out.iterdir()) == ["census-1.md", "census-3.md"]
    assert "three" in (out / "census-3.md").read_text(encoding="utf-8")
    piped = runner.invoke(app, ["draft", "--jsonl", "-", "--out", str(out), "--format", "json"], input=_case_line("p"))
    assert piped.exit_code == 0, piped.output
    assert json.loads((out / "stdin-1.json").read_text(encoding="utf-8"))["case"]["label"] == "p"


def test_a_bad_case_among_good_ones_is_reported_and_the_others_written(tmp_path: Path) -> None:
    ward = tmp_path / "ward"
    ward.mkdir()
    shutil.copy(GASTRIC, ward / "bed01.yaml")
    (ward / "bed02.yaml").write_text("gas: {ph: 7.49, pco2: 48, hco3: 36}\nchem: {k: 25}\n", encoding="utf-8")
    shutil.copy(THIAZIDE, ward / "bed03.yaml")
    out = tmp_path / "notes"
    result = runner.invoke(app, ["draft", str(ward), "--out", str(out)])
    assert result.exit_code == 2
    assert result.stderr.splitlines() == [
        f"notegen: {ward}/bed02.yaml: field `chem.k`: 25 mmol/L is not a plausible potassium (expected 1 to 10 mmol/L)",
        "notegen: 2 drafted, 1 rejected",
    ]
    assert sorted(p.name for p in out.iterdir()) == ["bed01.md", "bed03.md"]
    assert (out / "bed03.md").read_text(encoding="utf-8") == _single(THIAZIDE)
    assert _leftovers(out) == []


def test_two_cases_with_one_name_never_share_a_note(tmp_path: Path) -> None:
    for ward in ("east", "west"):
        (tmp_path / ward).mkdir()
    shutil.copy(GASTRIC, tmp_path / "east" / "bed01.yaml")
    shutil.copy(THIAZIDE, tmp_path / "west" / "bed01.yaml")
    out = tmp_path / "notes"
    result = runner.invoke(app, ["draft", str(tmp_path / "east"), str(tmp_path / "west"), "--out", str(out)])
    assert result.exit_code == 2
    assert result.stderr.splitlines() == [
        f"notegen: {tmp_path}/west/bed01.yaml: its note would overwrite the note of {tmp_path}/east/bed01.yaml "
        "(bed01.md); rename one of the two cases",
        "notegen: 1 drafted, 1 rejected",
    ]
    assert (out / "bed01.md").read_text(encoding="utf-8") == _single(GASTRIC)
    assert _leftovers(out) == []


def test_a_single_case_is_not_a_batch() -> None:
    result = runner.invoke(app, ["draft", str(GASTRIC)])
    assert result.exit_code == 0, result.output
    assert result.stderr == ""  # no summary line for one note


def test_paste_does_not_apply_to_a_batch(tmp_path: Path) -> None:
    result = runner.invoke(app, ["draft", str(GASTRIC), str(THIAZIDE), "--paste", "-"], input="K 3.1")
    assert result.exit_code == 2
    assert result.stderr == "notegen: --paste, --set and --date-order apply to a single case, not to a batch\n"


class _Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_progress_is_drawn_on_a_terminal_and_wiped_before_messages(tmp_path: Path) -> None:
    ward = tmp_path / "ward"
    ward.mkdir()
    shutil.copy(GASTRIC, ward / "a.yaml")
    (ward / "b.yaml").write_text("chem: {k: 25}\n", encoding="utf-8")
    terminal = _Terminal()
    status = run_batch(
        [str(ward)],
        Drafter(),
        DraftOptions(),
        out_dir=tmp_path / "notes",
        jsonl=False,
        window_hours=24.0,
        stderr=terminal,
    )
    assert status == 2
    shown = terminal.getvalue()
    drawn = "notegen: drafting [" + "." * 30 + "] 0/2"
    assert shown.startswith("\r" + drawn)
    # the line is wiped (spaces, back to the margin) before the message and before the summary
    wipe = "\r" + " " * len(drawn) + "\r"
    assert wipe + f"notegen: {ward}/b.yaml: field `chem.k`" in shown
    assert shown.endswith("notegen: 1 drafted, 1 rejected\n")


def test_no_progress_when_standard_error_is_not_a_terminal(tmp_path: Path) -> None:
    stream = io.StringIO()
    status = run_batch(
        [str(GASTRIC), str(THIAZIDE)],
        Drafter(),
        DraftOptions(),
        out_dir=tmp_path,
        jsonl=False,
        window_hours=24.0,
        stderr=stream,
    )
    assert status == 0
    assert stream.getvalue() == "notegen: 2 drafted, 0 rejected\n"


def test_json_lines_progress_counts_the_cases_done(tmp_path: Path) -> None:
    cases = tmp_path / "cases.jsonl"
    cases.write_text(_case_line("one") + "\n" + _case_line("two") + "\n", encoding="utf-8")
    terminal = _Terminal()
    status = run_batch(
        [str(cases)], Drafter(), DraftOptions(), out_dir=tmp_path / "notes", jsonl=True, window_hours=24.0,
        stderr=terminal,
    )  # fmt: skip
    assert status == 0
    assert terminal.getvalue().startswith("\rnotegen: drafting, 0 done")
    assert terminal.getvalue().endswith("\rnotegen: 2 drafted, 0 rejected\n")


def test_several_notes_on_standard_output_each_open_with_their_case() -> None:
    # a brief note names no case: run together, two patients' notes could be taken for one
    result = runner.invoke(app, ["draft", str(GASTRIC), str(THIAZIDE), "--format", "text", "--brief"])
    assert result.exit_code == 0, result.output
    headers = [line for line in result.stdout.splitlines() if line.startswith("=== ")]
    assert headers == [
        f"=== {GASTRIC}: demo C: nasogastric suction after surgery ===",
        f"=== {THIAZIDE}: demo A: thiazide and vomiting ===",
    ]
    first, second = result.stdout.split(headers[1] + "\n\n")
    assert first == headers[0] + "\n\n" + _single(GASTRIC, "--format", "text", "--brief") + "\n"
    assert second == _single(THIAZIDE, "--format", "text", "--brief")


def test_a_markdown_note_header_is_escaped_and_names_the_line(tmp_path: Path) -> None:
    cases = tmp_path / "cases.jsonl"
    cases.write_text(_case_line("bed *4*") + "\n" + _case_line("bed 5") + "\n", encoding="utf-8")
    result = runner.invoke(app, ["draft", "--jsonl", str(cases), "--brief", "--format", "text"])
    assert result.exit_code == 0, result.output
    headers = [line for line in result.stdout.splitlines() if line.startswith("=== ")]
    assert headers == [f"=== {cases}:1: bed *4* ===", f"=== {cases}:2: bed 5 ==="]  # full path, not cut
    markdown = runner.invoke(app, ["draft", "--jsonl", str(cases), "--brief"])
    assert markdown.exit_code == 0, markdown.output
    first = markdown.stdout.splitlines()[0]
    assert first.startswith("=== ") and first.endswith(": bed \\*4\\* ===")  # no emphasis in the header


def test_several_html_notes_need_a_folder(tmp_path: Path) -> None:
    result = runner.invoke(app, ["draft", str(GASTRIC), str(THIAZIDE), "--format", "html"])
    assert result.exit_code == 2
    assert result.stdout == ""
    assert "several HTML notes need --output-folder FOLDER" in result.stderr
    out = tmp_path / "pages"
    result = runner.invoke(app, ["draft", str(GASTRIC), str(THIAZIDE), "--format", "html", "--out", str(out)])
    assert result.exit_code == 0, result.output
    assert sorted(p.name for p in out.iterdir()) == ["gastric_suction.html", "thiazide_and_vomiting.html"]


def test_output_file_is_refused_for_several_cases_not_ignored(tmp_path: Path) -> None:
    target = tmp_path / "note.md"
    for arguments in ([str(GASTRIC), str(THIAZIDE)], ["--jsonl", "-"]):
        result = runner.invoke(app, ["draft", *arguments, "-o", str(target)], input=_case_line("bed 1") + "\n")
        assert result.exit_code == 2, result.output
        assert "--output writes one note; for several cases give --output-folder FOLDER" in result.stderr
        assert result.stdout == ""
        assert not target.exists()
