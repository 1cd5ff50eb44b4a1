"""The raw table every reader produces (header, rows with their original line numbers)."""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from labdb.ingest.errors import IssueList
from labdb.ingest.metadata import directive_for, field_for, squash_key

# "# key: value" or "# key = value"; a key is a short phrase starting with a letter, so a
# comment such as "# 10:30 started" is not mistaken for metadata.
_META = re.compile(r"^\s*#+\s*(?P<key>[^\W\d][\w .()/\-]{0,48}?)\s*[:=]\s*(?P<value>.*?)\s*$")


def meta_pair(text: str) -> tuple[str, str] | None:
    """``(key, value)`` from a ``# key: value`` comment, or None for a plain comment."""
    m = _META.match(text)
    if not m:
        return None
    return m.group("key").strip(), m.group("value")


@dataclass
class RawTable:
    """Cells as read, before any unit or role is applied.

    Attributes
    ----------
    file : str
        Name used in issues (may include a sheet name).
    source : str
        File or member name stored with each sweep.
    header : list of str
        Column headers as written.
    header_line : int
        1-based line (row) of the header.
    rows : list of (int, list)
        Original 1-based line and its cells (str from text files; str, float, int,
        datetime or None from worksheets).
    meta : dict of str to str
        Leading ``# key: value`` pairs (keys as written), directives excluded.
    meta_lines : dict of str to int
        Line of each metadata key (and of each directive).
    directives : dict of str to str
        ``reading_unit`` / ``quantity`` values steering wide files.
    decimal_comma : bool
        Numbers may use a decimal comma.
    separator : str
        How cells were separated, for messages ("comma", "tab", ...).
    units_row : list of str or None
        A row of bare units directly under the header, if the file has one.
    """

    file: str
    source: str
    header: list[str] = field(default_factory=list)
    header_line: int = 0
    rows: list[tuple[int, list]] = field(default_factory=list)
    meta: dict[str, str] = field(default_factory=dict)
    meta_lines: dict[str, int] = field(default_factory=dict)
    directives: dict[str, str] = field(default_factory=dict)
    decimal_comma: bool = False
    separator: str = "comma"
    units_row: list[str] | None = None

    def add_meta(self, key: str, value: str, line: int, issues: IssueList) -> None:
        """Store one metadata pair; a key given twice with different values is an issue."""
        directive = directive_for(key)
        store = self.directives if directive else self.meta
        name = directive or key
        canon = directive or field_for(key) or squash_key(key)
        for old in list(store):
            if (directive_for(old) or field_for(old) or squash_key(old)) != canon:
                continue
            if store[old].strip() != value.strip():
                issues.add(
                    f"metadata '{key}' is given twice (line {self.meta_lines[old]} says "
                    f"'{store[old]}', this line says '{value}')",
                    line=line,
                )
            return
        store[name] = value
        self.meta_lines[name] = line
