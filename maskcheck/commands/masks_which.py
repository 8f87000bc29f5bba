"""``maskcheck masks which``: the candidate masks for a radio, ranked, with the reasons.

Exit status: 0 when one candidate is singled out, 3 when the choice is
ambiguous or no mask applies (the output names the options that decide),
2 for bad input.  The same choice serves ``check`` without ``--mask``
(:func:`choice_from_args`).
"""

from __future__ import annotations

import json

from ..errors import MaskcheckError

__all__ = ["add_which_parser", "add_choice_options", "run_which", "choice_from_args", "chosen_mask", "refuse_choice_options_with_mask",
           "CHOICE_OPTIONS"]

#: the options that describe the radio for the choice (besides --carrier and --designator)
CHOICE_OPTIONS = ("service", "channel", "authority", "audio_filter", "installed")


def add_choice_options(p) -> None:
    """The options that describe the radio for the choice of a mask."""
    from ._spelling import add_option

    add_option(p, "--service")
    add_option(p, "--channel")
    add_option(p, "--authority")
    add_option(p, "--audio-filter", choices=("yes", "no"))
    add_option(p, "--installed")


def add_which_parser(msub) -> None:
    w = msub.add_parser("which", help="rank the masks that may apply to a radio, and say why")
    from ._spelling import add_option

    add_option(w, "--carrier", required=True)
    add_option(w, "--designator", detail="its class decides between masks")
    add_choice_options(w)
    add_option(w, "--mask-dir", action="append", default=[])
    add_option(w, "--json", detail="the ranking")
    add_option(w, "--force", action="store_true")


def _station(args):
    import datetime as dt

    from ..core.designator import parse_designator
    from ..core.units import parse_frequency
    from ..masks.which import Station

    carrier = parse_frequency(args.carrier, what="--carrier")
    channel = parse_frequency(args.channel, what="--channel") if getattr(args, "channel", None) else None
    if channel is not None and not channel > 0:
        raise MaskcheckError(f"{args.channel}: expected a channel bandwidth > 0", where="--channel")
    installed = None
    if getattr(args, "installed", None):
        try:
            installed = dt.date.fromisoformat(args.installed)
        except ValueError:
            raise MaskcheckError(f"{args.installed}: expected a date YYYY-MM-DD", where="--installed") from None
    emission_class = None
    if getattr(args, "designator", None):
        emission_class = parse_designator(args.designator.strip().upper()).emission_class
    audio = None if getattr(args, "audio_filter", None) is None else args.audio_filter == "yes"
    return Station(carrier_hz=carrier, service=getattr(args, "service", None), channel_hz=channel,
                   emission_class=emission_class, authority=getattr(args, "authority", None), audio_filter=audio,
                   installed=installed)


def choice_from_args(args):
    """The ranked choice for the radio the options describe (a :class:`maskcheck.masks.which.Choice`)."""
    from ..masks.library import list_masks
    from ..masks.which import choose_mask, load_tables

    station = _station(args)
    rows, tables = load_tables(args.mask_dir)
    return choose_mask(station, list_masks(extra_dirs=args.mask_dir), rows, tables)


def run_which(args, con) -> int:
    from rich.markup import escape

    from ..io.output import check_writable, write_text

    if args.json and args.json != "-":
        check_writable(args.json, force=args.force)
    choice = choice_from_args(args)
    if args.json:
        write_text(args.json, json.dumps(choice.to_dict(), indent=2, ensure_ascii=False), force=args.force)
    if args.json != "-":
        _print(choice, con, escape)
    return 0 if choice.unambiguous else 3


def _print(choice, con, escape) -> None:
    """The candidates, wrapped at words at the console's width (a mask id is one word and never splits)."""
    from rich.console import Group
    from rich.padding import Padding
    from rich.table import Table
    from rich.text import Text

    from ..core.units import format_frequency
    from ..report.term_layout import indented, is_plain, Trimmed

    def say(text, indent=0):
        con.print(indented(con, text, indent) if indent or is_plain(con) else Text(text))

    s = choice.station
    given = [f"service {s.service}" if s.service else "", f"channel {format_frequency(s.channel_hz)}" if s.channel_hz else "",
             f"class {s.emission_class}" if s.emission_class else "", s.authority or "",
             "" if s.audio_filter is None else ("audio filter" if s.audio_filter else "no audio filter"),
             f"installed {s.installed.isoformat()}" if s.installed else ""]
    say(f"Candidate masks for {format_frequency(s.carrier_hz)}"
        + (f" ({', '.join(g for g in given if g)})" if any(given) else ""))
    for i, c in enumerate(choice.candidates, 1):
        # a hanging indent: the number in a column of its own, the text and reasons wrapped beside it
        block = Table.grid(padding=0)
        block.add_column(no_wrap=True)
        block.add_column()
        block.add_row(f"{i:>2}. ", Group(Text.assemble((c.id, "bold"), f"  {c.authority} {c.citation}  (score {c.score})"),
                                         *(Padding(Text(r), (0, 0, 0, 2)) for r in c.reasons)))
        con.print(Trimmed(block) if is_plain(con) else block)
    if choice.ruled_out:
        say("Ruled out:")
        for i, why in choice.ruled_out:
            say(f"{i}: {why}", 4)
    word = "Choice" if choice.unambiguous else "No single choice"
    say(f"{word}: {choice.summary()}")
    say("The ranking is our own reading of the rules' tables, a pre-compliance aid: the rule text and the "
        "regulator decide.")


def chosen_mask(args):
    """``check`` without ``--mask``: the one candidate the stated facts single out, and the sentence saying so.

    Refused (exit 2) when the choice is ambiguous or nothing applies: the
    message names the candidates and the options that decide.  The choice
    options go only with this: with ``--mask`` they have nothing to decide.
    """
    from ..masks.library import load_mask

    choice = choice_from_args(args)
    if not choice.candidates:
        raise MaskcheckError(f"not given, and {choice.summary()}; name one with --mask", where="--mask")
    if not choice.unambiguous:
        names = ", ".join(c.id for c in choice.candidates[:6]) + (" ..." if len(choice.candidates) > 6 else "")
        how = ", ".join(choice.decide_with) or "--mask"
        raise MaskcheckError(f"not given, and the choice is ambiguous between {names}: decide with {how}, or "
                             "name the mask with --mask (see 'maskcheck masks which')", where="--mask")
    best = choice.best
    why = "; ".join(r.lstrip("+ ") for r in best.reasons if r.startswith("+"))
    sentence = (f"{best.id} (no --mask given; the one candidate the stated facts single out, by our own ranking of "
                f"the rules' tables: {why}; the rule text and the regulator decide)")
    return load_mask(best.id, extra_dirs=args.mask_dir), sentence


def refuse_choice_options_with_mask(args) -> None:
    """The choice options with ``--mask``: refused, they would decide nothing."""
    given = [f"--{o.replace('_', '-')}" for o in CHOICE_OPTIONS if getattr(args, o, None) is not None]
    if args.mask is not None and given:
        what = "chooses a mask" if len(given) == 1 else f"(and {', '.join(given[1:])}) choose a mask"
        raise MaskcheckError(f"{what}; with --mask there is nothing to choose: leave "
                             f"{'it' if len(given) == 1 else 'them'} out, or leave out --mask", where=given[0])
