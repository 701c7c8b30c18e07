"""Exit codes and the one exception family that the command line turns into a single clear line."""

from __future__ import annotations

from enum import IntEnum
from pathlib import Path


class ExitCode(IntEnum):
    OK = 0
    #: items over the ``--fail-on`` threshold
    ITEMS_OVER_THRESHOLD = 1
    #: usage, config or input error: the tool could not do what was asked
    ERROR = 2
    #: a batch ran, but some inputs could not be read (their rows say why)
    SOME_INPUTS_FAILED = 3
    #: studygap itself failed (a bug): the one line says so and --debug shows the traceback
    INTERNAL_ERROR = 4
    INTERRUPTED = 130


_CONTROL = {c: f"\\x{c:02x}" for c in (*range(0x00, 0x20), *range(0x7f, 0xa0))}
_CONTROL.update({0x0a: "\\n", 0x0d: "\\r", 0x09: "\\t"})


def visible(text: str) -> str:
    """Text with control and escape characters written out ("\\n", "\\x1b"), so that a file name or a message
    can neither break one record into two lines nor send escape sequences to a terminal or a CI log."""
    return text.translate(_CONTROL)


def internal_error_line(exc: BaseException, path: str | None = None) -> str:
    """The one line for an unexpected error (a bug in studygap), naming the document it happened on."""
    where = f"{visible(path)}: " if path else ""
    detail = visible(" ".join(str(exc).split()))
    detail = detail if len(detail) <= 200 else detail[:197] + "..."
    return (f"studygap: internal error: {where}studygap failed ({type(exc).__name__}"
            f"{': ' + detail if detail else ''}); this is a bug in studygap: rerun with --debug to see the "
            "traceback, and please report it")


class StudygapError(Exception):
    """A mistake in what the user gave us; printed as one line, never as a traceback."""

    def line(self) -> str:
        return f"studygap: error: {self}"


class UsageError(StudygapError):
    pass


class InputError(StudygapError):
    """A document that cannot be read, with the cause and what to do about it."""

    def __init__(self, path: str | Path, cause: str, hint: str = "") -> None:
        self.path = str(path)
        self.cause = cause
        self.hint = hint
        super().__init__(self.path, cause, hint)

    def __str__(self) -> str:
        text = f"{visible(self.path)}: {self.cause}"
        return f"{text} ({self.hint})" if self.hint else text


class ChecklistError(StudygapError):
    """Every problem found in a checklist file, each already located as FILE:LINE:COLUMN: path: message."""

    def __init__(self, problems: list[str]) -> None:
        self.problems = list(problems)
        super().__init__(problems)

    def __str__(self) -> str:
        n = len(self.problems)
        head = f"the checklist has {n} problem{'s' if n != 1 else ''}"
        return head + ":\n" + "\n".join(self.problems)

    def line(self) -> str:
        return "studygap: error: " + str(self)
