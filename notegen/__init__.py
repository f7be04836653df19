"""notegen: drafts the acid-base assessment section of a clinical note."""

from __future__ import annotations

__version__ = "0.1.0"
