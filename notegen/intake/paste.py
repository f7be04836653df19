"""Read a block of lab results pasted from a lab display or a results message.

Every non-blank line is either taken or listed in `unused` with the reason. Rules
(documented for users in rules/vocabulary/analytes.yaml):

- A heading line (ABG, VBG, BMP, URINE ...) and/or a time line starts a block; consecutive
  heading and time lines form one block header. A heading holds until the next header.
- A line with two or more times is a time-column header: the rows below give one value
  per column, in order. A row whose cell count differs from the column count is not used.
- A time written on an analyte line applies to that line only.
- A date like 03/04/2024 where both parts could be the month reads in the date order given; without
  one it stands only as the paste's one date (the times order the results; it is shown as written),
  else it is refused (PasteError, intake/paste_dates.py). A time without a date, or a date without a
  year, is refused too.
- Units are passed on as written; a line without a unit leaves "unit" out, unless the paste's
  other units settle its system (intake/unit_system.py).
- A line whose name says calculated, estimated or corrected is not used (another quantity);
  a line that is neither a heading nor a lab line ends the block above it; a table's column
  header ("Test Result Units") is skipped; a header with a collection and a result time is
  refused. Decimal commas and gas shorthand: intake/paste_formats.py.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field, replace
from datetime import datetime
from typing import Any

from notegen.case.checks import foreign_digit
from notegen.errors import InputError, PasteError
from notegen.intake.paste_dates import PasteDates, read_times
from notegen.intake.paste_dates import echo as _echo
from notegen.intake.paste_formats import SHORTHAND_ORDER, decimal_commas, gas_shorthand, names_any, only_words_from
from notegen.intake.sections import LAB_SECTIONS, ParsedInput, Reading, Section, assemble_sections, parse_number
from notegen.intake.unit_system import settle_units
from notegen.knowledge import shipped_knowledge
from notegen.knowledge.analytes import Heading, Vocabulary, normalise

# How an analyte id reads in a message, where the id is not already the word ("ph" is pH).
_ANALYTE_WORDS = {"ph": "pH", "pco2": "PCO2", "paco2": "PaCO2", "total_co2": "total CO2"}

_NUM = r"\d+(?:\.\d+)?"
_UNIT = (r"(?:mm\s?Hg|mm\[Hg\]|kPa|torr|mOsm/kg(?:\s?H2O)?|"
         r"[A-Za-zµμ%][\w\[\]µμ%.*^]*/[\w\[\]µμ.*^]+(?:\s?H2O)?)")
_RANGE_BODY = rf"(?:[<>≤≥]=?\s*{_NUM}|{_NUM}\s*[-–]\s*{_NUM})"
_RANGE_WORD = r"(?:ref(?:erence)?(?:\s*range)?|normal|nl|rr)\s*:?\s*"
_REST_TOKENS = re.compile(
    rf"(?P<range>[\(\[]\s*(?:{_RANGE_WORD})?{_RANGE_BODY}\s*(?:{_UNIT})?\s*[\)\]]"
    rf"|(?:{_RANGE_WORD}){_RANGE_BODY}|{_NUM}\s*[-–]\s*{_NUM}(?![\d.]))"
    rf"|\(\s*(?P<pflag>[A-Za-z*!]{{1,8}})\s*\)"
    rf"|(?P<value>(?:(?P<qual>[<>≤≥]=?)\s*)?(?P<num>{_NUM}))"
    rf"|(?P<unit>{_UNIT})(?![\w/])"
    rf"|(?P<word>\S+)",
    re.IGNORECASE,
)
# The first value on a line: a number not glued to a word ("CO2", "HCO3" are names).
_GLUED_FLAG = r"(?=(?:HH|LL|H|L)\*?(?![\w/]))"  # "90L": a flag printed against the value
_FIRST_VALUE = re.compile(rf"(?<![\w.+\-])(?:[<>≤≥]=?\s*)?{_NUM}(?:(?![\w/])|{_GLUED_FLAG})"
                          rf"|(?<![\w.+\-])(?:[<>≤≥]=?\s*){_NUM}")
_PAREN_UNIT = re.compile(rf"\(\s*(?P<unit>{_UNIT})\s*\)", re.IGNORECASE)


@dataclass
class _Block:
    number: int
    heading: Heading | None = None
    time: tuple[str, datetime] | None = None
    columns: list[tuple[str, datetime]] | None = None


@dataclass
class _LabLine:
    number: int
    text: str
    analyte: str
    marker: str | None
    block: _Block
    cells: list[tuple[tuple[str, datetime] | None, dict[str, Any]]] = field(default_factory=list)


def parse_paste(text: str, *, source: str = "paste", date_order: str | None = None) -> ParsedInput:
    """Read pasted lab text into case-file sections (`gas`, `chem`, `urine`).

    Raises PasteError for what cannot be read safely: an ambiguous date, two different
    values for one field at one time, or a paste with no lab value at all.
    """
    for number, raw in enumerate(text.splitlines(), start=1):
        if (digit := foreign_digit(raw)) is not None:  # a Bengali ৪ looks like 8; Python would read 4
            raise PasteError(f"{raw.strip()[:60]!r} {digit}", line=number, source=source)
    vocabulary = shipped_knowledge().analytes
    reader = _PasteReader(vocabulary, source, date_order)
    text, commas = decimal_commas(text)
    lab_lines = reader.read_lines(text)
    date_as_written = reader.dates.unresolved()
    readings = settle_units(reader.resolve(lab_lines))

    def conflict(message: str, involved: Any) -> InputError:
        lines = [r.line for r in involved if r.line is not None]
        return PasteError(message, line=lines[0] if lines else None, source=source)

    if not readings:
        if not text.strip():
            raise PasteError("the paste is empty", source=source)
        shown = "; ".join(reader.unused[:3])
        raise PasteError(f"no lab value notegen can use was found ({shown})", source=source)
    if commas:
        readings = [replace(r, origin=f"{r.origin} (decimal comma read as a point)") for r in readings]
    sections, provenance, duplicates = assemble_sections(readings, conflict)
    unused = sorted(reader.unused, key=_line_number) + duplicates
    return ParsedInput(data=sections, provenance=provenance, unused=unused, date_as_written=date_as_written)


def _as_section(name: str) -> Section:
    for section in LAB_SECTIONS:
        if section == name:
            return section
    raise ValueError(f"unknown section {name!r}")


def _line_number(entry: str) -> int:
    number = entry.split(":", 1)[0].removeprefix("line ")
    return int(number) if number.isdigit() else 0


class _PasteReader:
    def __init__(self, vocabulary: Vocabulary, source: str, date_order: str | None = None) -> None:
        self.dates = PasteDates(source, date_order)  # how 03/04/2026 reads, and every date as written
        self.vocabulary = vocabulary
        self.source = source
        self.names = vocabulary.name_index()
        # the most words in an analyte name: a prefix search tries no longer prefix (linear in the line)
        self.longest_name = max((len(name.split()) for name in self.names), default=1)
        self.headings = vocabulary.heading_index()
        self.markers = vocabulary.marker_index()
        self.noise = set(vocabulary.noise)
        self.derived = set(vocabulary.derived)
        self.time_labels = {normalise(label) for label in vocabulary.time_labels}
        self.flags = {flag.lower() for flag in vocabulary.flags}
        self.empty_cells = {cell.lower() for cell in vocabulary.empty_cells}
        self.status_words = {word.lower() for word in vocabulary.status_words}
        self.column_labels = {normalise(label) for label in vocabulary.column_labels}
        self.result_time_labels = {normalise(label) for label in vocabulary.result_time_labels}
        self.unused: list[str] = []
        self.has_urine = False

    # -- pass 1: what each line is ------------------------------------------------
    def read_lines(self, text: str) -> list[_LabLine]:
        lab_lines: list[_LabLine] = []
        block = _Block(0)
        in_header = False
        for number, raw in enumerate(text.splitlines(), start=1):
            line = raw.strip()
            if not any(ch.isalnum() for ch in line):
                continue  # blank or a rule of dashes: holds nothing
            times, rest = read_times(line, number, self.dates)
            shorthand = self._shorthand(number, line, rest, times, block, in_header)
            if shorthand is not None:
                block, in_header = shorthand[0], False
                lab_lines.extend(shorthand[1])
                continue
            heading = self.headings.get(normalise(rest))
            label_only = self._only_time_labels(rest)
            if len(times) > 1 and names_any(rest, self.result_time_labels):
                raise PasteError(f"{line!r} gives a collection time and a result time; keep only the collection "
                                 "time, which orders the results", line=number, source=self.source)
            if not times and heading is None and only_words_from(rest, self.column_labels):
                continue  # "Test  Result  Units  Range": a table's column header
            if heading is None and not (times and label_only) and self._unknown_header(rest):
                self._unused(number, line, "is not a heading notegen knows; the lines below it do not take "
                                           "the heading or time above it")
                block, in_header = _Block(block.number + 1), False
                continue
            if heading is not None or (times and label_only):
                if not in_header:
                    block = _Block(block.number + 1)
                in_header = True
                if heading is not None:
                    block.heading = heading
                    if heading.section == "urine":
                        self.has_urine = True
                if len(times) == 1:
                    block.time, block.columns = times[0], None
                elif len(times) > 1:
                    block.time, block.columns = None, times
                continue
            in_header = False
            lab_line = self._lab_line(number, line, rest, times, block)
            if lab_line is not None:
                lab_lines.append(lab_line)
        return lab_lines

    def _shorthand(
        self, number: int, line: str, rest: str, times: list[tuple[str, datetime]], block: _Block, in_header: bool
    ) -> tuple[_Block, list[_LabLine]] | None:
        """A gas heading then pH/PaCO2/PaO2/HCO3 ("ABG 7.52/48/80/38"): a block of its own."""
        found = gas_shorthand(rest, self.headings)
        if found is None:
            return None
        time = times[0] if len(times) == 1 else (block.time if in_header and not times else None)
        new = _Block(block.number + 1, heading=found[0], time=time)
        if len(times) > 1 or len(found[1]) != len(SHORTHAND_ORDER):
            self._unused(number, line, f"gives {len(found[1])} numbers joined by '/'; gas shorthand is read only "
                                       "as the four of pH/PaCO2/PaO2/HCO3, with one time")
            return new, []
        lab_lines = [_LabLine(number, line, analyte, None, new, [(time, {"value": parse_number(text)})])
                     for analyte, text in zip(SHORTHAND_ORDER, found[1], strict=True)]
        return new, lab_lines

    def _unknown_header(self, rest: str) -> bool:
        """A line with no value and no analyte name: a heading notegen does not know ("NOTES FROM WARD")."""
        return _FIRST_VALUE.search(rest) is None and not self._leading_analyte(rest)

    def _only_time_labels(self, rest: str) -> bool:
        words = normalise(rest)
        if not words:
            return True
        return words in self.time_labels or all(word in self.time_labels for word in words.split())

    def _lab_line(
        self, number: int, line: str, rest: str, times: list[tuple[str, datetime]], block: _Block
    ) -> _LabLine | None:
        first = _FIRST_VALUE.search(rest)
        name_text = rest[: first.start()] if first else rest
        unit_in_name = _PAREN_UNIT.search(name_text)
        if unit_in_name:
            name_text = name_text[: unit_in_name.start()] + name_text[unit_in_name.end():]
        name_words = normalise(name_text).split()
        derived = [word for word in name_words if word in self.derived]
        if derived:  # "Osmolality, calculated": another quantity, unless the analyte is calculated anyway
            name_text = " ".join(word for word in name_words if word not in self.derived)
        analyte, marker = self._analyte(name_text)
        if analyte is not None and derived and not self.vocabulary.analytes[analyte].calculated:
            label = _ANALYTE_WORDS.get(analyte, analyte.replace("_", " "))
            self._unused(number, line, f"is marked {derived[0]!r}: a calculated, estimated or corrected value "
                                       f"is not the measured {label}; only measured values are read")
            return None
        if analyte is None:
            if first is None:
                known = self._leading_analyte(name_text)
                reason = "has no numeric value" if known else "is not a lab line this draft reads"
                self._unused(number, line, reason)
            else:
                self._unused(number, line, "is not an analyte this draft reads")
            return None
        if marker == "urine" or set(self.vocabulary.analytes[analyte].fields) == {"urine"}:
            self.has_urine = True
        cells, units, words, ranges_ok = self._cells(rest[first.start():] if first else "")
        del ranges_ok
        if unit_in_name:
            units.append(unit_in_name["unit"])
        if words:
            self._unused(number, line, f"has text beside the value that cannot be read: {' '.join(words)!r}")
            return None
        if len(set(units)) > 1:
            self._unused(number, line, f"gives two different units ({', '.join(sorted(set(units)))})")
            return None
        values = [cell for cell in cells if cell is not None]
        if not values:
            self._unused(number, line, "has no numeric value")
            return None
        lab_line = _LabLine(number, line, analyte, marker, block)
        unit = units[0] if units else None
        if block.columns is not None:
            if times:
                self._unused(number, line, "has its own time inside a time-column table")
                return None
            if len(cells) != len(block.columns):
                self._unused(number, line, f"has {len(cells)} value(s) for {len(block.columns)} time columns; "
                                           "cannot tell which value belongs to which time")
                return None
            pairs: list[tuple[tuple[str, datetime] | None, dict[str, Any] | None]] = list(
                zip(block.columns, cells, strict=True))
        else:
            if len(cells) != 1:
                self._unused(number, line, f"has {len(cells)} values and no time columns to tell them apart")
                return None
            if len(times) > 1:
                self._unused(number, line, "has more than one time")
                return None
            pairs = [(times[0] if times else block.time, cells[0])]
        for moment, cell in pairs:
            if cell is None:
                continue
            if cell.get("qualifier") not in (None, "<", ">"):
                self._unused(number, line, f"uses {cell['qualifier']!r}, which a case file cannot hold "
                                           "(only < and >)")
                return None
            value = dict(cell)
            if unit is not None:
                value["unit"] = unit
            lab_line.cells.append((moment, value))
        return lab_line

    def _leading_analyte(self, text: str) -> bool:
        words = normalise(text).split()
        return any(" ".join(words[:n]) in self.names for n in range(min(len(words), self.longest_name), 0, -1))

    def _analyte(self, name_text: str) -> tuple[str | None, str | None]:
        words = normalise(name_text).split()
        whole = " ".join(words)
        if whole in self.names and whole not in self.markers:
            return self.names[whole], None
        marker: str | None = None
        kept: list[str] = []
        for word in words:
            if word in self.markers:
                found = self.markers[word]
                if marker is not None and marker != found:
                    return None, None  # "urine serum sodium": contradictory, not guessed
                marker = found
            elif word not in self.noise:
                kept.append(word)
        key = " ".join(kept)
        return self.names.get(key), marker

    def _cells(self, rest: str) -> tuple[list[dict[str, Any] | None], list[str], list[str], bool]:
        cells: list[dict[str, Any] | None] = []
        units: list[str] = []
        words: list[str] = []
        ranges = False
        for match in _REST_TOKENS.finditer(rest):
            if match["range"]:
                ranges = True
            elif match["pflag"]:
                if match["pflag"].lower() not in self.flags:
                    words.append(match.group(0))
            elif match["value"]:
                number = parse_number(match["num"])
                cell: dict[str, Any] = {"value": number}
                qualifier = match["qual"]
                if qualifier:
                    cell["qualifier"] = {"≤": "<=", "≥": ">="}.get(qualifier, qualifier)
                cells.append(cell)
            elif match["unit"]:
                units.append(re.sub(r"\s+", "", match["unit"]) if "hg" in match["unit"].lower() else match["unit"])
            else:
                word = match["word"]
                if word.lower() in self.flags or word.lower() in self.status_words or word in (",", ";", ":", "="):
                    continue
                if word.lower() in self.empty_cells:
                    cells.append(None)
                    continue
                words.append(word)
        return cells, units, words, ranges

    def _unused(self, number: int, line: str, reason: str) -> None:
        self.unused.append(f"line {number}: {_echo(line)} {reason}")

    # -- pass 2: which section each lab line belongs to ---------------------------
    def resolve(self, lab_lines: list[_LabLine]) -> list[Reading]:
        evidence: dict[int, set[str]] = {}
        decided: dict[int, tuple[Section, str | None] | str | None] = {}
        for lab_line in lab_lines:
            outcome = self._section(lab_line, None)
            decided[lab_line.number] = outcome
            if isinstance(outcome, tuple) and lab_line.block.heading is None:
                evidence.setdefault(lab_line.block.number, set()).add(outcome[0])
        readings: list[Reading] = []
        for lab_line in lab_lines:
            outcome = decided[lab_line.number]
            if outcome is None:
                outcome = self._section(lab_line, evidence.get(lab_line.block.number, set()))
            if isinstance(outcome, str) or outcome is None:
                self._unused(lab_line.number, lab_line.text, outcome or "cannot be placed")
                continue
            section, sample = outcome
            field_name = self.vocabulary.analytes[lab_line.analyte].fields[section]
            for moment, value in lab_line.cells:
                readings.append(Reading(
                    section=section, field=field_name, value=value,
                    origin=f"{self.source} line {lab_line.number}",
                    taken_at=moment[0] if moment else None, order=moment[1] if moment else None,
                    sample=sample if section == "gas" else None, line=lab_line.number,
                ))
        return readings

    def _section(
        self, lab_line: _LabLine, evidence: set[str] | None
    ) -> tuple[Section, str | None] | str | None:
        """(section, gas sample), or a reason it cannot be used, or None: needs the block's evidence."""
        analyte = self.vocabulary.analytes[lab_line.analyte]
        candidates: set[str] = set(analyte.fields)
        marker = lab_line.marker
        heading = lab_line.block.heading
        label = _ANALYTE_WORDS.get(lab_line.analyte, lab_line.analyte.replace("_", " "))
        if analyte.needs_origin and marker is None and heading is None:
            return f"could be blood or urine {label}: give it a URINE heading or 'urine' in its name"
        if marker == "urine":
            candidates &= {"urine"}
            if not candidates:
                return f"is a urine {label}, which is not read for an acid-base assessment"
        elif marker is not None:
            candidates.discard("urine")
            if not candidates:
                return f"is a blood {label}, which is not read for an acid-base assessment"
        elif heading is not None:
            if heading.section in candidates:
                candidates = {heading.section}
            elif heading.section == "urine":
                return f"sits under a urine heading, but urine {label} is not read for an acid-base assessment"
            else:
                candidates.discard("urine")
                if not candidates:
                    return (f"sits under a {heading.section} heading, but {label} is read as a urine value here: "
                            "give it a URINE heading or 'urine' in its name")
        if len(candidates) > 1:
            if evidence is None:
                return None
            if "urine" in candidates and self.has_urine:
                blood = "blood" if lab_line.analyte == "ph" else "serum"
                return (f"could be {blood} or urine {label}: the paste holds urine values and this line has "
                        "no URINE heading or 'urine' in its name")
            blood_side = (candidates - {"urine"}) & evidence
            if len(blood_side) != 1:
                where = " or ".join(sorted(candidates))
                return (f"could be {where} {label}: give it a heading (ABG, BMP, URINE) or a word such as "
                        "'serum' or 'urine' in its name")
            candidates = blood_side
        section = _as_section(next(iter(candidates)))
        sample: str | None = analyte.sample
        if marker in ("arterial", "venous"):
            if sample is not None and sample != marker:
                return f"says both {sample} and {marker}"
            sample = marker
        if heading is not None and heading.sample is not None and section == "gas":
            if sample is not None and sample != heading.sample:
                return f"is {sample} but sits under a {heading.sample} gas heading"
            sample = heading.sample
        return section, sample
