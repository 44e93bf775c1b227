"""Every bad ruleset of the catalogue in docs/bad-input.md raises
descry.RulesetError with the message the command line prints, and the
exception names the file, the line and the rule. Reference: the descry
command line's error message on the same file."""

from __future__ import annotations

import pytest

import descry

from conftest import cli

# (what the catalogue calls it, the ruleset, the line the error names)
BAD_RULESETS = [
    ("invalid TOML", '[[flag]\nname = "a"\n', 1),
    ("unknown key", "[[count]]\nname = \"c\"\npattern = '({int})'\nrnage = [1, 2]\n", 4),
    ("wrong type", "[[count]]\nname = \"c\"\npattern = '({int})'\nrange = \"1-2\"\n", 4),
    ("empty name", '[[flag]]\nname = ""\nany = ["x"]\n', 2),
    (
        "duplicate output name",
        "[[flag]]\nname = \"a\"\nany = [\"x\"]\n[[count]]\nname = \"a\"\npattern = '({int})'\n",
        5,
    ),
    ("invalid pattern", "[[flag]]\nname = \"a\"\npattern = 'ab[c'\n", 2),
    ("invalid only under fancy-regex", "[[flag]]\nname = \"a\"\nfancy = true\npattern = 'ab(?<=x+)c('\n", None),
    ("number macro outside a group", "[[count]]\nname = \"c\"\npattern = '{num}\\s*l'\n", None),
    ("range reversed", "[[count]]\nname = \"c\"\npattern = '({int})'\nrange = [24, 1]\n", 2),
    ("label case without label", '[[label]]\nname = "fuel"\n[[label.case]]\nany = ["diesel"]\n', None),
    (
        "example naming an unknown feature",
        '[[flag]]\nname = "a"\nany = ["x"]\n[[example]]\nvalue = "x"\nexpect = { b = true }\n',
        5,
    ),
    (
        "map keys equal once normalized",
        '[[label]]\nname = "kind"\n[label.map]\n"Hydro" = "hydrostatic"\n"hydro" = "hydrostatic"\n',
        None,
    ),
    (
        "unit spellings equal once normalized",
        "[[measure]]\nname = \"power\"\npattern = '({num})\\s*(mw|kw)'\nunit = \"kW\"\n"
        "[measure.units]\nkW = 1\nmW = 0.000001\nMW = 1000\n",
        None,
    ),
    ("not UTF-8", b"[[flag]]\nname = \"\xff\"\n", None),
]


def cli_message(tmp_path, ruleset) -> str:
    data = tmp_path / "in.csv"
    data.write_text("c\nx\n")
    out = cli("check", data, "-r", ruleset, "-c", "c", check=False)
    assert out.returncode == 2, out.stderr
    return out.stderr.removeprefix("descry: error: ").rstrip("\n")


@pytest.mark.parametrize("what,text,line", BAD_RULESETS, ids=[c[0] for c in BAD_RULESETS])
def test_a_bad_ruleset_raises_the_cli_message(tmp_path, what, text, line):
    path = tmp_path / "bad.toml"
    if isinstance(text, bytes):
        path.write_bytes(text)
    else:
        path.write_text(text)
    with pytest.raises(descry.RulesetError) as e:
        descry.Ruleset.load(path)
    assert str(e.value) == cli_message(tmp_path, path)
    assert e.value.file == str(path)
    if line is not None:
        assert e.value.line == line
    if isinstance(text, str):
        # From text, the same message with the given name for the file.
        with pytest.raises(descry.RulesetError) as from_text:
            descry.Ruleset.from_toml(text, name=str(path))
        assert str(from_text.value) == str(e.value)


def test_a_pattern_error_gives_its_position(tmp_path):
    with pytest.raises(descry.RulesetError) as e:
        descry.Ruleset.from_toml("[[flag]]\nname = \"a\"\npattern = 'ab[c'\n", "r.toml")
    assert e.value.position == 2
    assert e.value.rule == '[[flag]] "a"'


def test_a_missing_ruleset_file(tmp_path):
    path = tmp_path / "nowhere.toml"
    with pytest.raises(descry.RulesetError) as e:
        descry.Ruleset.load(path)
    assert str(e.value) == cli_message(tmp_path, path)


def test_a_huge_file_is_not_read_whole():
    with pytest.raises(descry.RulesetError, match="longer than 16 MiB, so not a ruleset"):
        descry.Ruleset.load("/dev/zero")


def test_errors_are_value_errors():
    assert issubclass(descry.RulesetError, ValueError)
    assert issubclass(descry.InputError, ValueError)
