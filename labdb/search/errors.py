"""The exception search raises for a query it refuses, naming each bad parameter."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class QueryProblem:
    """One refused parameter: ``field`` is the query attribute, ``message`` says why."""

    field: str
    message: str

    def __str__(self) -> str:
        return f"{self.field}: {self.message}"


class SearchInputError(ValueError):
    """A search or tank query that cannot be answered; ``problems`` lists every bad parameter.

    Pages attach each problem to the form field of the same name; the API turns them into
    ``{"errors": [{"field", "message"}]}`` with status 400.
    """

    def __init__(self, problems: list[QueryProblem]):
        self.problems = list(problems)
        super().__init__("; ".join(str(p) for p in self.problems))

    @property
    def fields(self) -> list[str]:
        return [p.field for p in self.problems]
