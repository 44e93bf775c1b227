"""The exceptions descry raises, with the messages of the command line."""

from __future__ import annotations


class DescryError(Exception):
    """Anything descry refuses, with a message that names the place."""

    def __init__(self, message: str) -> None:
        super().__init__(message)
        self.message = message


class RulesetError(DescryError, ValueError):
    """A problem in a ruleset: its file, line, rule and pattern position."""

    def __init__(
        self,
        message: str,
        file: str | None = None,
        line: int | None = None,
        rule: str | None = None,
        position: int | None = None,
    ) -> None:
        super().__init__(message)
        self.file = file
        self.line = line
        self.rule = rule
        self.position = position


class InputError(DescryError, ValueError):
    """A table descry cannot read as asked: a missing column, a column
    that is not text, an output column that would overwrite an input."""
