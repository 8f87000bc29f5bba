"""The provenance tables of a mask file: the v1-4 ``[provenance]`` table and the v5 ``[[provenance]]`` checks.

Schema 1 to 4 state the provenance as one table with a typed ``verified``
flag; schema 5 lists the checks made on the values (``[[provenance]]``) and
the values the rule does not state (``[[choice]]``), from which the grade is
derived (:mod:`maskcheck.masks.provenance`).  ``provenance`` takes either
form; :data:`ProvenanceField` tells pydantic which by its shape.
"""

from __future__ import annotations

from typing import Annotated, Literal, Union

from pydantic import Discriminator, Field, StrictBool, Tag

from ._table import Table
from .values import Text

__all__ = ["Provenance", "SourceCheckEntry", "ChoiceEntry", "ProvenanceField", "PROVENANCE_TAGS"]


class Provenance(Table):
    """Where the rule comes from and whether its values were checked."""

    authority: Text = Field(description="who makes the rule, e.g. 'FCC', 'ITU'")
    citation: Text = Field(description="the clause, e.g. '47 CFR 97.307(d)'")
    edition: Text = Field(description="which text was read (and when), or 'not checked'")
    verified: StrictBool = Field(description="true only when checked against the official text")
    measurement_note: str = Field("", description="short note on how to measure")


class SourceCheckEntry(Table):
    """v5: one check made on the mask's values (one ``[[provenance]]`` entry); see :mod:`maskcheck.masks.provenance`."""

    source: Text = Field(description="what was read: title and paragraph, e.g. '47 CFR 97.307(d)'")
    edition: Text = Field(description="the edition or date of what was read, e.g. 'eCFR, 2024-10-01'; "
                          "for kind = 'memory', where it was looked for")
    kind: Literal["official", "reprint", "memory"] = Field(
        description="'official' (the government's own edition), 'reprint' (a dated public reprint of the text) "
        "or 'memory' (no text found: the values named rest on memory)")
    confirms: tuple[Text, ...] = Field(
        min_length=1, description="the values it confirms: ['all'], or key paths such as 'applies', 'reference_power', "
        "'regions.<region name>', 'regions.<region name>.limit', 'regions[0].offset', 'regions.*.stop'")
    note: str = Field("", description="what was found, in our own words (e.g. 'only the opening of the section')")


class ChoiceEntry(Table):
    """v5: values the rule does not state, chosen by us (one ``[[choice]]`` entry): they are not graded, and are shown."""

    values: tuple[Text, ...] = Field(min_length=1, description="key paths of the values, as in provenance.confirms")
    reason: Text = Field(description="why this choice, e.g. 'the rule states no measurement bandwidth; common practice'")


def _provenance_form(value) -> str:
    """Which form of ``provenance`` a file gives: the v1-4 table or the v5 list of checks."""
    if isinstance(value, (list, tuple)):
        return "checks"
    return "table"


#: the table of schema 1-4 or, from schema 5, the list of checks made
ProvenanceField = Annotated[
    Union[Annotated[Provenance, Tag("table")], Annotated[tuple[SourceCheckEntry, ...], Tag("checks")]],
    Discriminator(_provenance_form),
]

#: the tags pydantic puts into an error's location inside ``provenance`` (the loader leaves them out)
PROVENANCE_TAGS = ("table", "checks")
