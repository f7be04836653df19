"""The one exception tree of notegen.

    NotegenError                 exit 1: anything we did not foresee
     ├── InputError              exit 2: the user's input cannot be used
     │    ├── CaseFileError      the case file cannot be read or parsed (file, line, column)
     │    ├── CaseValueError     a field has a wrong type, unit or implausible value (field path)
     │    ├── PasteError         a pasted lab block cannot be used (line)
     │    └── NothingToAssessError  a valid case holds no measured value (the input's name)
     ├── UsageError              exit 2: the command line itself is wrong
     ├── RulePackError           exit 2: a rule pack fails its load-time checks (file, line, rule id)
     └── TemplateError           exit 2: a note template fails to compile or render (template, line)

Every error carries where it happened, so the message can say what to fix.
"""

from __future__ import annotations

from collections.abc import Mapping


class NotegenError(Exception):
    """Base of every error notegen raises on purpose."""

    exit_code = 1

    def __init__(self, message: str) -> None:
        super().__init__(message)
        self.message = message

    def __str__(self) -> str:
        return self.message

    def __reduce__(self) -> tuple[object, ...]:
        # Rebuilt without the subclass's __init__ (whose arguments are not `args`), so an error crosses
        # to another process whole: its class, message and fields (`draft --jobs`).
        return (_rebuilt, (type(self), self.args, self.__dict__))


def _rebuilt(kind: type[NotegenError], args: tuple[object, ...], state: dict[str, object]) -> NotegenError:
    error = kind.__new__(kind, *args)
    error.__dict__.update(state)
    return error


class InputError(NotegenError):
    """The input (case file, paste, FHIR bundle, --set value) cannot be used."""

    exit_code = 2


class CaseFileError(InputError):
    """A case file cannot be read or parsed."""

    def __init__(
        self,
        message: str,
        *,
        filename: str | None = None,
        line: int | None = None,
        column: int | None = None,
    ) -> None:
        self.filename = filename
        self.line = line
        self.column = column
        where = filename or "<input>"
        if line is not None:
            where += f", line {line}"
            if column is not None:
                where += f", column {column}"
        super().__init__(f"{where}: {message}")


class CaseValueError(InputError):
    """One or more fields of a case hold unusable values.

    `problems` holds one `(field_path, message)` pair per bad field, so a user
    fixing a file sees every problem at once rather than one per run.
    """

    def __init__(
        self,
        problems: list[tuple[str, str]],
        *,
        filename: str | None = None,
        origins: Mapping[str, str] | None = None,
    ) -> None:
        self.problems = problems
        self.filename = filename
        origins = origins or {}

        def where(path: str) -> str:
            # a value taken from a paste or a FHIR resource also names that line or resource
            origin = origins.get(path)
            return f"field `{path}` ({origin})" if origin else f"field `{path}`"

        head = f"{filename}: " if filename else ""
        if len(problems) == 1:
            path, text = problems[0]
            message = f"{head}{where(path)}: {text}"
        else:
            lines = [f"{head}{len(problems)} fields cannot be used:"]
            lines += [f"  - {where(path)}: {text}" for path, text in problems]
            message = "\n".join(lines)
        super().__init__(message)


class PasteError(InputError):
    """A pasted lab block cannot be used."""

    def __init__(self, message: str, *, line: int | None = None, source: str | None = None) -> None:
        self.line = line
        self.source = source
        where = source or "paste"
        if line is not None:
            where += f", line {line}"
        super().__init__(f"{where}: {message}")


class NothingToAssessError(InputError):
    """A valid case that holds no measured value: there is nothing to draft from.

    Raised by the `Drafter` for every path; a caller that knows the input's name gives it with `at`.
    """

    def __init__(self, where: str | None = None, *, hint: str = "") -> None:
        self.where = where
        self.hint = hint
        head = f"{where}: " if where else ""
        super().__init__(
            f"{head}nothing to assess: the case holds no measured value; give gas, chem or urine values{hint}"
        )

    def at(self, where: str, *, hint: str = "") -> NothingToAssessError:
        """The same refusal naming its input (`hint`: what else this way in could give, e.g. a paste)."""
        return self if self.where is not None else NothingToAssessError(where, hint=hint)


class UsageError(NotegenError):
    """The command line is wrong (conflicting or missing options)."""

    exit_code = 2


class RulePackError(NotegenError):
    """A rule pack fails to load or fails a load-time check.

    `problems` lists `(filename, line, message)`; every one is reported.
    """

    exit_code = 2

    def __init__(self, problems: list[tuple[str, int | None, str]]) -> None:
        self.problems = problems
        lines = []
        for filename, line, text in problems:
            where = filename if line is None else f"{filename}:{line}"
            lines.append(f"{where}: {text}")
        super().__init__("\n".join(lines))


class TemplateError(NotegenError):
    """A note template fails to compile or to render."""

    exit_code = 2

    def __init__(self, message: str, *, template: str | None = None, line: int | None = None) -> None:
        self.template = template
        self.line = line
        where = template or "<template>"
        if line is not None:
            where += f", line {line}"
        super().__init__(f"{where}: {message}")


def printable(key: object, limit: int | None = 60) -> str:
    """A name or key for a message: control characters escaped (a terminal would run them), cut at `limit`."""
    text = "".join(char if char.isprintable() else f"\\u{ord(char):04x}" for char in str(key))
    return text if limit is None or len(text) <= limit else f"{text[: limit - 3]}..."
