"""Located problems found while reading bench files, and the exception that carries them."""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

#: At most this many issues are kept per file; one summary line stands for the rest, so a
#: file with a thousand bad cells gives a readable message rather than a wall of text.
MAX_ISSUES = 20


@dataclass(frozen=True)
class Issue:
    """One problem at one place in one file.

    Attributes
    ----------
    file : str
        File name (or archive member name) as the user knows it.
    line : int or None
        1-based line of the original file (row of a worksheet); None when not tied to a line.
    column : str or None
        Column header exactly as written in the file, or an argument name; None if none.
    message : str
        What is wrong, in plain words, ideally with what would be accepted.
    """

    file: str
    line: int | None
    column: str | None
    message: str

    def __str__(self) -> str:
        where = self.file
        if self.line is not None:
            where += f" line {self.line}"
        if self.column is not None:
            where += f", column '{self.column}'"
        return f"{where}: {self.message}"


class ParseError(Exception):
    """A file (or an array payload) could not be read; ``issues`` says where and why.

    ``str(error)`` lists the issues one per line.
    """

    def __init__(self, issues: Issue | Iterable[Issue]):
        self.issues: list[Issue] = [issues] if isinstance(issues, Issue) else list(issues)
        if not self.issues:
            raise ValueError("ParseError needs at least one Issue")
        super().__init__("\n".join(str(issue) for issue in self.issues))

    @classmethod
    def at(
        cls, file: str, message: str, line: int | None = None, column: str | None = None
    ) -> ParseError:
        """Build an error holding a single issue."""
        return cls(Issue(file, line, column, message))


class IssueList:
    """Collects issues for one file, keeping the first :data:`MAX_ISSUES` of them.

    Parsers call :meth:`add` for every cheap-to-find problem and :meth:`raise_if_any` at
    the end of a stage, so users see several problems per upload instead of one at a time.
    """

    def __init__(self, file: str):
        self.file = file
        self.issues: list[Issue] = []
        self.dropped = 0

    def add(self, message: str, line: int | None = None, column: str | None = None) -> None:
        """Record one problem (silently counted once the cap is reached)."""
        if len(self.issues) < MAX_ISSUES:
            self.issues.append(Issue(self.file, line, column, message))
        else:
            self.dropped += 1

    def extend(self, issues: Iterable[Issue]) -> None:
        """Record issues found by another stage (keeps their file names)."""
        for issue in issues:
            if len(self.issues) < MAX_ISSUES:
                self.issues.append(issue)
            else:
                self.dropped += 1

    def count(self) -> int:
        """How many issues were recorded so far, including those beyond the cap."""
        return len(self.issues) + self.dropped

    def __bool__(self) -> bool:
        return bool(self.issues)

    def raise_if_any(self) -> None:
        """Raise :class:`ParseError` if anything was recorded."""
        if not self.issues:
            return
        issues = list(self.issues)
        if self.dropped:
            issues.append(
                Issue(self.file, None, None, f"... and {self.dropped} more problems not listed")
            )
        raise ParseError(issues)
