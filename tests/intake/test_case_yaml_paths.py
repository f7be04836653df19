"""Case files are read by libyaml when PyYAML has it, else by the pure-Python reader: the same data, the same refusals.

libyaml only accepts: whatever it refuses, or whatever breaks a limit (aliases, depth, number of
values), is read again by the pure-Python reader, whose message and line are the ones reported.
The hostile-input and bad-input corpora run here on both paths, unchanged (their own files run
the default path).
"""

from __future__ import annotations

from collections.abc import Iterator
from pathlib import Path
from typing import Any

import pytest
import test_bad_inputs
import test_hostile

from notegen.errors import CaseFileError
from notegen.intake import files

ROOT = Path(__file__).resolve().parents[2]
YAML_FILES = sorted(
    [*(ROOT / "samples").glob("*.yaml"), *(ROOT / "tests" / "bad_inputs").glob("*.yaml")]
    + list((ROOT / "tests" / "fixtures").rglob("*.yaml"))
)
LIBYAML = files.FAST_LOADER
needs_libyaml = pytest.mark.skipif(LIBYAML is None, reason="PyYAML was built without libyaml")


@pytest.fixture(params=["libyaml", "python"])
def reader(request: pytest.FixtureRequest, monkeypatch: pytest.MonkeyPatch) -> Iterator[str]:
    if request.param == "libyaml":
        if LIBYAML is None:
            pytest.skip("PyYAML was built without libyaml")
        monkeypatch.setattr(files, "FAST_LOADER", LIBYAML)
    else:
        monkeypatch.setattr(files, "FAST_LOADER", None)
    yield request.param


@pytest.mark.parametrize("entry", test_bad_inputs.MANIFEST, ids=[entry["id"] for entry in test_bad_inputs.MANIFEST])
def test_bad_input_corpus_on_both_readers(entry: dict[str, Any], reader: str) -> None:
    test_bad_inputs.test_corpus_entry(entry)


@pytest.mark.parametrize(
    ("text", "message"), [h[1:] for h in test_hostile.HOSTILE_TEXTS], ids=[h[0] for h in test_hostile.HOSTILE_TEXTS]
)
def test_hostile_texts_on_both_readers(text: str, message: str, reader: str, tmp_path: Path) -> None:
    test_hostile.read_case(str(test_hostile.SAMPLES[0]))  # warmed, as the hostile tests' fixture does
    test_hostile.test_hostile_text_is_refused_in_bounded_memory(text, message, None, tmp_path)


@pytest.mark.parametrize("tag", test_hostile.PYTHON_TAGS)
def test_python_tags_on_both_readers(tag: str, reader: str, tmp_path: Path) -> None:
    test_hostile.test_python_object_tags_are_refused_and_nothing_runs(tag, tmp_path)


def _outcome(text: str, name: str) -> tuple[str, object]:
    try:
        return "data", files.parse_yaml(text, name)
    except CaseFileError as error:
        return "refused", str(error)


def _texts() -> list[tuple[str, str]]:
    texts = [(str(path), path.read_bytes().decode("utf-8", errors="replace")) for path in YAML_FILES]
    texts += [(name, text) for name, text, _ in test_hostile.HOSTILE_TEXTS]
    texts += [
        ("alias-on-line-3", "gas:\n  ph: &p 7.5\n  pco2: *p\n"),
        ("anchor-without-alias", "gas:\n  ph: &p 7.5\n"),
        ("depth-12", "a:\n" + "".join("  " * i + "b:\n" for i in range(1, 11)) + "  " * 11 + "c: 1\n"),
        ("depth-13", "a:\n" + "".join("  " * i + "b:\n" for i in range(1, 12)) + "  " * 12 + "c: 1\n"),
        ("values-at-limit", "m: [" + ", ".join(["a"] * (files.MAX_YAML_NODES - 2)) + "]\n"),
        ("values-over-limit", "m: [" + ", ".join(["a"] * (files.MAX_YAML_NODES - 1)) + "]\n"),
        ("bad-indent", "gas:\n  ph: 7.5\n pco2: 40\n"),
        ("tab", "gas:\n\tph: 7.5\n"),
        ("unclosed-quote", 'label: "bed 4\n'),
        ("two-documents", "a: 1\n---\nb: 2\n"),
        ("comments-only", "# nothing\n"),
        ("control-character", "label: a\x07b\n"),
        ("lone-surrogate", "label: a\ud800b\n"),
    ]
    return texts


@needs_libyaml
@pytest.mark.parametrize(("name", "text"), _texts(), ids=[name.rsplit("/", 1)[-1] for name, _ in _texts()])
def test_both_readers_give_the_same_data_or_the_same_message(
    name: str, text: str, monkeypatch: pytest.MonkeyPatch
) -> None:
    fast = _outcome(text, name)
    monkeypatch.setattr(files, "FAST_LOADER", None)
    assert fast == _outcome(text, name)


@needs_libyaml
@pytest.mark.parametrize("path", sorted((ROOT / "samples").glob("*.yaml")), ids=lambda p: p.name)
def test_libyaml_reads_every_sample_itself(path: Path) -> None:
    # not a fall-back to the pure-Python reader: libyaml's reading is accepted as it is
    assert LIBYAML is not None
    text = path.read_text(encoding="utf-8")
    read = files._parse_with_libyaml(LIBYAML, text, str(path))
    assert read == files.parse_yaml(text, str(path))


@needs_libyaml
@pytest.mark.parametrize(
    "text",
    [
        "a: &x 1\nb: *x\n",
        "a:\n" + "".join("  " * i + "b:\n" for i in range(1, 12)) + "  " * 12 + "c: 1\n",
        "m: [" + ", ".join(["a"] * files.MAX_YAML_NODES) + "]\n",
        "a: 1\n---\nb: 2\n",
    ],
    ids=["alias", "depth", "values", "two-documents"],
)
def test_libyaml_hands_every_limit_to_the_reference_reader(text: str) -> None:
    assert LIBYAML is not None
    with pytest.raises(files._Refused):
        files._parse_with_libyaml(LIBYAML, text, "case.yaml")
