"""Input readers: pasted lab text, `--set` overrides and FHIR R4 JSON.

Each produces data in the case-file shape; the case loader validates it. FHIR support
imports fhir.resources only when a FHIR file is read.
"""

from __future__ import annotations

from notegen.inputs.base import ParsedInput
from notegen.inputs.fhir import looks_like_fhir, read_fhir
from notegen.inputs.overrides import apply_overrides, override_provenance
from notegen.inputs.paste import parse_paste

__all__ = ["ParsedInput", "apply_overrides", "looks_like_fhir", "override_provenance", "parse_paste", "read_fhir"]
