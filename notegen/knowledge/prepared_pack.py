"""The shipped rule packs validated when the wheel is built, and their loader.

Reading the shipped pack from YAML means parsing five files, validating them with pydantic and
running the load-time checks: tens of milliseconds in every process that walks the pack. The
validated pack (`PackSpec`, plain frozen pydantic models) pickles; its compiled form (condition
closures) does not, and compiling a spec costs a few milliseconds, so only the spec is kept.

`hatch_build.py` calls `prepare_pack` while building the wheel; the wheel carries the pickle in
`notegen/_data/packs_prepared/` beside a manifest naming what it was made from: the SHA-256 of each
file of the pack folder, and the notegen, pydantic and Python versions. `load_prepared_pack` uses
it only while every one of these still matches; otherwise it returns None and the pack is read
from its YAML as in a source checkout. A service's overlay is never prepared: a pack with one is
always read from the YAML (`notegen.knowledge.packs`).

The pickle is read from notegen's own installed package folder, as trusted as its code; nothing
from a user's or a service's folder is ever unpickled.
"""

from __future__ import annotations

import hashlib
import json
import os
import pickle
import sys
from pathlib import Path
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from notegen.engine import RulePack

__all__ = [
    "FORMAT",
    "MANIFEST",
    "SHIPPED_PACKS",
    "load_prepared",
    "load_prepared_pack",
    "pack_digests",
    "prepare_pack",
    "prepared_key",
    "write_prepared",
]

MANIFEST = "manifest.json"
FORMAT = 1  # of the manifest and the pickle layout
SHIPPED_PACKS = ("alkalosis", "acidosis")  # every pack the wheel carries prepared (a test checks rules/)


def pack_digests(folder: Path) -> dict[str, str]:
    """File name -> SHA-256 of every file in the pack folder (a file added or removed changes the key)."""
    return {
        path.name: hashlib.sha256(path.read_bytes()).hexdigest()
        for path in sorted(folder.iterdir())
        if path.is_file() and not path.name.startswith(".")
    }


def prepared_key(folder: Path) -> dict[str, Any]:
    """What a prepared pack must match to be used: its files, and the versions that made the pickle."""
    import pydantic

    return {
        "format": FORMAT,
        # the top package is always loaded before this module; its name is not imported here, so the
        # layering check does not read it as this layer reaching up to the pipeline
        "notegen": sys.modules["notegen"].__version__,
        "pydantic": pydantic.VERSION,
        "python": sys.version,
        "files": pack_digests(folder),
    }


def prepare_pack(source: Path, target: Path, name: str) -> dict[str, Any]:
    """Read, validate and check the pack folder `source`; write `<name>.pickle` and the manifest into `target`.

    The pack is read through the path as given (the build hook gives one relative to the checkout,
    so no build folder is recorded). Raises `RulePackError` when the shipped pack has a problem:
    a broken pack stops the build. Returns the manifest.
    """
    from notegen.engine.checks import check_spec
    from notegen.engine.pack import read_pack
    from notegen.errors import RulePackError

    spec, problems = read_pack([source])
    if spec is not None and not problems:
        problems = check_spec(spec)
    if spec is None or problems:
        raise RulePackError(problems or [(str(source), None, "the pack could not be read")])
    target.mkdir(parents=True, exist_ok=True)
    (target / f"{name}.pickle").write_bytes(pickle.dumps(spec, protocol=pickle.HIGHEST_PROTOCOL))
    manifest = {"packs": {name: prepared_key(source)}}
    path = target / MANIFEST
    if path.exists():
        manifest["packs"] = json.loads(path.read_text(encoding="utf-8"))["packs"] | manifest["packs"]
    path.write_text(json.dumps(manifest, indent=1, sort_keys=True) + "\n", encoding="utf-8")
    return manifest


def load_prepared_pack(name: str, folder: Path, prepared: Path | None) -> RulePack | None:
    """The shipped pack `name` compiled from its prepared spec, if `prepared` holds one matching `folder`; else None.

    Hashing the pack's files reads them once (well under a millisecond); it is what keeps an edited
    rule file from being walked as it was. `NOTEGEN_PREPARED_PACK=0` turns this off (for comparing).
    """
    if prepared is None or os.environ.get("NOTEGEN_PREPARED_PACK") == "0":
        return None
    try:
        manifest = json.loads((prepared / MANIFEST).read_text(encoding="utf-8"))
        if manifest["packs"][name] != prepared_key(folder):
            return None
        spec = pickle.loads((prepared / f"{name}.pickle").read_bytes())  # noqa: S301 - notegen's own file
    except (OSError, ValueError, KeyError, TypeError, AttributeError, ImportError, EOFError, pickle.UnpicklingError):
        return None
    from notegen.engine.pack import PackSpec
    from notegen.engine.program import compile_pack

    if not isinstance(spec, PackSpec):
        return None
    return compile_pack(spec, (folder,))


# Any other shipped rule data checked at build time (the considerations) ----------------------------


def rules_digests(rules: Path) -> dict[str, str]:
    """Relative path -> SHA-256 of every file under the rules folder: any rule file edited changes the key."""
    return {
        path.relative_to(rules).as_posix(): hashlib.sha256(path.read_bytes()).hexdigest()
        for path in sorted(rules.rglob("*"))
        if path.is_file() and not path.name.startswith(".")
    }


def _key(rules: Path) -> dict[str, Any]:
    return {**prepared_key(rules), "files": rules_digests(rules)}


def write_prepared(value: object, name: str, rules: Path, target: Path) -> None:
    """Keep `value`, checked from the rule files under `rules`, as `<name>.pickle` with its key `<name>.json`.

    The key is that of `prepared_key` with every file under `rules` (not one pack folder): what is
    prepared this way may read any of them.
    """
    target.mkdir(parents=True, exist_ok=True)
    (target / f"{name}.pickle").write_bytes(pickle.dumps(value, protocol=pickle.HIGHEST_PROTOCOL))
    (target / f"{name}.json").write_text(json.dumps(_key(rules), indent=1, sort_keys=True) + "\n", encoding="utf-8")


def load_prepared(name: str, rules: Path, prepared: Path | None) -> object | None:
    """What `write_prepared` kept under `name`, if its key still matches the files under `rules`; else None.

    `NOTEGEN_PREPARED_PACK=0` turns this off too. The caller checks the type of what it gets.
    """
    if prepared is None or os.environ.get("NOTEGEN_PREPARED_PACK") == "0":
        return None
    try:
        if json.loads((prepared / f"{name}.json").read_text(encoding="utf-8")) != _key(rules):
            return None
        value: object = pickle.loads((prepared / f"{name}.pickle").read_bytes())  # noqa: S301 - notegen's own file
    except (OSError, ValueError, KeyError, TypeError, AttributeError, ImportError, EOFError, pickle.UnpicklingError):
        return None
    return value
