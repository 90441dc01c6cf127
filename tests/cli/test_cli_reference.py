"""The command-line reference (docs/cli.md) is the parser's own: a changed option without
`python -m letdown.cli.reference` fails here."""
from letdown.cli import VERBS
from letdown.cli.reference import REFERENCE, markdown


def test_the_shipped_reference_is_generated_from_the_parser():
    assert REFERENCE.read_text(encoding="utf-8") == markdown()


def test_every_verb_is_in_the_reference():
    text = markdown()
    for verb in VERBS:
        assert f"## `letdown {verb}`" in text
