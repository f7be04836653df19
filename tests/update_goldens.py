"""Rewrite the golden notes `samples/expected/<stem>.md` from the current code.

Run it on purpose, after a change to the note that you mean to make, and read the diff before
committing it:

    python tests/update_goldens.py && git diff samples/expected
"""

from __future__ import annotations

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
SAMPLES = ROOT / "samples"
EXPECTED = SAMPLES / "expected"


def golden_notes() -> dict[Path, str]:
    """Each sample's golden file path and the Markdown note the code drafts for it now."""
    from notegen.intake.read import read_case
    from notegen.pipeline import Drafter

    drafter = Drafter()
    return {
        EXPECTED / f"{path.stem}.md": drafter.draft(read_case(str(path))) for path in sorted(SAMPLES.glob("*.yaml"))
    }


def main() -> int:
    sys.path.insert(0, str(ROOT))
    EXPECTED.mkdir(exist_ok=True)
    notes = golden_notes()
    for path, text in notes.items():
        old = path.read_text(encoding="utf-8") if path.exists() else None
        path.write_text(text, encoding="utf-8")
        state = "new" if old is None else ("changed" if old != text else "unchanged")
        print(f"{state:9} {path.relative_to(ROOT)}")
    for stale in sorted(set(EXPECTED.glob("*.md")) - set(notes)):
        print(f"stale     {stale.relative_to(ROOT)} (no sample of that name; delete it if it is not needed)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
