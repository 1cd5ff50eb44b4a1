"""Domain exceptions of the measurements services."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Problem:
    """One located reason for refusing input (file, line, column may be unknown)."""

    message: str
    file: str | None = None
    line: int | None = None
    column: str | None = None
    field: str | None = None

    def __str__(self) -> str:
        where = []
        if self.file:
            where.append(self.file)
        if self.line is not None:
            where.append(f"line {self.line}")
        if self.column:
            where.append(f"column '{self.column}'")
        if self.field:
            where.append(f"field '{self.field}'")
        return f"{', '.join(where)}: {self.message}" if where else self.message


class Rejected(Exception):
    """Input refused as a whole; nothing was stored."""

    def __init__(self, problems: list[Problem] | Problem | str):
        if isinstance(problems, str):
            problems = [Problem(problems)]
        elif isinstance(problems, Problem):
            problems = [problems]
        self.problems = list(problems)
        super().__init__("; ".join(str(p) for p in self.problems))

    @classmethod
    def from_parse_error(cls, exc) -> Rejected:
        return cls(
            [
                Problem(i.message, file=i.file, line=i.line, column=i.column)
                for i in getattr(exc, "issues", [])
            ]
            or [Problem(str(exc))]
        )
