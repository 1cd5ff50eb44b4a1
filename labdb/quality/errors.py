"""Exceptions the quality services raise for refused requests, each naming what to fix."""

from __future__ import annotations


class QualityError(Exception):
    """A quality operation refused: ``field`` names the input at fault, the text says why."""

    def __init__(self, message: str, field: str = "") -> None:
        super().__init__(message)
        self.field = field

    def __str__(self) -> str:
        text = super().__str__()
        return f"{self.field}: {text}" if self.field else text


class ReviewRefused(QualityError):
    """A flag review that cannot be recorded (missing note, unknown state)."""


class SettingsRefused(QualityError):
    """Part quality settings that contradict each other or the part's rating."""
