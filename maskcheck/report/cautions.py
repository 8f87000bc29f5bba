"""The cautions every maskcheck output carries, written once.

The PDF closing page, the terminal summary and the README all take their
wording from here, so the three never drift apart.

- :data:`DISCLAIMER` -- what a maskcheck result is and is not (a paragraph).
- :data:`SAFETY` -- bench-safety cautions, one sentence-group per item.
- :data:`SHORT_CAUTION` -- one line for places without room for more.
- :data:`UNVERIFIED_NOTE` -- the line shown beside a mask whose rule data has
  not been checked against the official text.
- :data:`DESIGN_CAUTION` -- what a design solved on the simulator is, and is not.
- :func:`readme_block` -- the same texts as a Markdown section.

References
----------
.. [1] The pre-compliance / certification distinction and the role of the
   national regulator and accredited laboratories are common practice, no
   published source is quoted here.
"""

from __future__ import annotations

__all__ = ["DISCLAIMER", "SAFETY", "SHORT_CAUTION", "UNVERIFIED_NOTE", "DESIGN_CAUTION", "readme_block"]

#: What a result means -- and what it does not mean.
DISCLAIMER = (
    "maskcheck is a pre-compliance screening aid. Its results are not a "
    "certification, a type approval or a legal opinion, and they do not show "
    "that equipment or a station is lawful to operate. Emission rules differ "
    "from country to country and are amended over time; the local regulator "
    "and accredited test laboratories decide whether an emission complies. "
    "The mask data used here may lag behind or misread the rule it stands for: "
    "check it against the current official text before relying on a result. "
    "Mask data that nobody has yet checked against the official text is "
    "flagged as unverified in every report."
)

#: Bench-safety cautions for the measurements that feed a check.
SAFETY = [
    "RF exposure: keep people away from antennas, open feed lines and "
    "unshielded connections while a transmitter is keyed; high-power RF can "
    "burn skin and heat tissue before it is felt. Follow the exposure limits "
    "that apply where you work.",
    "High voltage: amplifiers and their power supplies contain voltages that "
    "kill. Capacitors can stay charged long after the supply is switched off; "
    "discharge and check them before touching anything inside.",
    "Instrument inputs: never connect a transmitter output directly to a "
    "spectrum analyser or SDR input. Use a dummy load with a rated attenuator "
    "or sampling tap, and know the maximum safe input level (power and DC) of "
    "the instrument before you key up.",
]

#: One line, for terminal output and page footers.
SHORT_CAUTION = (
    "Screening aid only, not a certification: rules vary by country and "
    "your regulator has the final word."
)

#: Shown wherever a mask's rule data is graded below ``verified`` (with the grade beside it).
UNVERIFIED_NOTE = "rule data not verified against the official text"

#: What a design solved on the simulator is (``maskcheck design``: terminal, JSON and PDF).
DESIGN_CAUTION = (
    "A simulation is a design aid, not evidence: the solved values describe an invented model of a "
    "transmitter, not the equipment. A built transmitter is measured (a trace or a recording through "
    "'maskcheck check'), and only that measurement is screened against the rule."
)


def readme_block() -> str:
    """The disclaimer and the safety cautions as a Markdown section.

    Returns
    -------
    str
        A ``## Cautions`` section, ending with a newline, for the README.

    Examples
    --------
    >>> readme_block().splitlines()[0]
    '## Cautions'
    """
    lines = ["## Cautions", "", DISCLAIMER, "", "Bench safety:", ""]
    lines += [f"- {item}" for item in SAFETY]
    return "\n".join(lines) + "\n"
