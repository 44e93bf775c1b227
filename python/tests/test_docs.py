"""Every ```python block of the README and docs/python.md runs, from the
repository root (where samples/ and rulesets/ are)."""

from __future__ import annotations

import os
import re

import pytest

from conftest import ROOT

PAGES = ["README.md", "docs/python.md"]


def blocks():
    for page in PAGES:
        text = (ROOT / page).read_text(encoding="utf-8")
        for i, block in enumerate(re.findall(r"```python\n(.*?)```", text, re.S)):
            yield pytest.param(block, id=f"{page}#{i + 1}")


@pytest.mark.parametrize("code", list(blocks()))
def test_block_runs(code, monkeypatch):
    monkeypatch.chdir(ROOT)
    namespace: dict = {}
    exec(compile(code, "<doc block>", "exec"), namespace)
    assert os.getcwd() == str(ROOT)
