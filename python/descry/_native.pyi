from collections.abc import Sequence
from typing import Any

VERSION: str

class Ruleset:
    @staticmethod
    def load(path: str | Any) -> Ruleset: ...
    @staticmethod
    def from_toml(text: str, name: str = "<string>") -> Ruleset: ...
    @property
    def column(self) -> str | None: ...
    @property
    def file(self) -> str: ...
    @property
    def text(self) -> str: ...
    @property
    def features(self) -> list[tuple[str, str, str, int]]: ...
    @property
    def types_fixed(self) -> bool: ...
    @property
    def warnings(self) -> list[str]: ...
    @property
    def unfixed_counts(self) -> list[str]: ...
    def explain_json(self, values: Sequence[str], fired_only: bool = False) -> str: ...

class ArrowStream:
    def __arrow_c_stream__(self, requested_schema: object | None = None) -> object: ...

def features(columns: Sequence[tuple[str, Any]], rulesets: Sequence[tuple[Ruleset, str]]) -> ArrowStream: ...
def check(
    column: Any,
    name: str,
    rules: Ruleset,
    min_coverage: float | None = None,
    require: Sequence[tuple[str, float]] = (),
    baseline: str | None = None,
    save_baseline: str | None = None,
    limits: tuple[float | None, float | None, float | None, float | None] = (None, None, None, None),
) -> str: ...
def survey(
    column: Any,
    name: str,
    top: int = 20,
    examples: int = 3,
    placeholders: Sequence[str] = (),
    default_placeholders: bool = True,
) -> str: ...
def propose(
    column: Any,
    name: str,
    min_share: float | None = None,
    max_share: float | None = None,
    max_rules: int | None = None,
    prefix: str | None = None,
) -> tuple[str, str]: ...
def cluster(
    column: Any,
    name: str,
    method: str = "letters",
    threshold: str | None = None,
    q: int = 3,
    loose_digits: bool = False,
    max_diameter: str | None = None,
) -> str: ...
def lookup(column: Any, name: str, rulesets: Sequence[Ruleset], counts: Any | None = None) -> ArrowStream: ...
