"""``maskcheck designator``: decode a designator, or compute one from the formula inputs.

Also holds the emission options that ``maskcheck check`` shares
(:func:`add_emission_options`, :func:`emission_from_args`).
"""

from __future__ import annotations

import json
import math
from contextlib import contextmanager

from ._common import console
from ._spelling import add_option

__all__ = ["register", "run", "add_emission_options", "formula_inputs", "emission_from_args"]


def add_emission_options(p, *, with_designator: bool = True) -> None:
    """Options that say what the emission is and give the inputs of its formula."""
    from ._spelling import add_option

    g = p.add_argument_group("emission (necessary bandwidth and domains)")
    if with_designator:
        add_option(g, "--designator", detail="or the class alone (J3E) with the formula inputs")
    add_option(g, "--necessary-bw", metavar="BW|measured", detail="or 'measured' to use the occupied bandwidth")
    add_option(g, "--max-mod")
    add_option(g, "--low-mod")
    if with_designator:
        add_option(g, "--sideband", choices=["upper", "lower"])
    add_option(g, "--deviation")
    add_option(g, "--baud")
    add_option(g, "--wpm")
    add_option(g, "--wpm-convention", choices=["itu", "paris"], default="itu")
    add_option(g, "--shift")
    add_option(g, "--k-factor")
    add_option(g, "--roll-off")
    add_option(g, "--channels")

def _number(text, option):
    from ..errors import UnitError

    try:
        value = float(text)
    except (TypeError, ValueError):
        raise UnitError(f"{text!r} is not a number", where=option) from None
    return value


def formula_inputs(args) -> dict:
    """The formula inputs given on the command line, in SI units."""
    from ..core.units import parse_frequency

    def freq(text, option):
        return parse_frequency(text, what=option, default_unit="Hz") if text else None

    return {
        "max_mod_hz": freq(args.max_mod, "--max-mod"),
        "low_mod_hz": freq(args.low_mod, "--low-mod"),
        "deviation_hz": freq(args.deviation, "--deviation"),
        "shift_hz": freq(args.shift, "--shift"),
        "symbol_rate_bd": _number(args.baud, "--baud") if args.baud else None,
        "wpm": _number(args.wpm, "--wpm") if args.wpm else None,
        "wpm_convention": args.wpm_convention if args.wpm else None,
        "k_factor": _number(args.k_factor, "--k-factor") if args.k_factor else None,
        "roll_off": _number(args.roll_off, "--roll-off") if args.roll_off is not None else None,
        "channels": _number(args.channels, "--channels") if args.channels else None,
    }


def emission_from_args(args, designator: str | None):
    """(necessary, authorized, warnings) for ``check`` from the options."""
    from ..core.necessary import resolve_necessary
    from ..core.units import parse_frequency

    inputs = formula_inputs(args)
    stated = None
    measured = False
    if args.necessary_bw:
        if args.necessary_bw.strip().lower() == "measured":
            measured = True
        else:
            stated = parse_frequency(args.necessary_bw, what="--necessary-bw", default_unit="Hz")
    if measured:
        if any(v is not None for k, v in inputs.items() if k != "wpm_convention"):
            from ..errors import StationError

            raise StationError("'measured' takes no formula inputs; drop them or drop 'measured'", where="--necessary-bw")
        nb, warnings = "measured", []
    else:
        nb, warnings = resolve_necessary(designator, stated_hz=stated, inputs=inputs)
    authorized = None
    raw = getattr(args, "authorized_bw", None)
    if raw:
        authorized = "necessary" if raw.strip().lower() == "necessary" else parse_frequency(raw, what="--authorized-bw", default_unit="Hz")
    return nb, authorized, warnings


def register(sub) -> None:
    d = sub.add_parser(
        "designator",
        help="decode an emission designator, or compute one from the formula inputs",
        description=(
            "Decode an emission designator (maskcheck designator 16K0F3EJN --carrier 450MHz), or compute the "
            "necessary bandwidth and the designator from its formula "
            "(maskcheck designator --emission F3E --max-mod 3kHz --deviation 5kHz)."
        ),
    )
    d.add_argument("code", nargs="?", metavar="CODE", help="a designator such as 2K70J3E (or the symbols alone with the formula inputs)")
    d.add_argument("--emission", metavar="CLASS", help="classification symbols to compute the designator for, e.g. F3E")
    add_option(d, "--carrier", detail="also show the domain boundaries")
    d.add_argument("--boundary", choices=["sm1539", "percent"], default="sm1539", help="boundary rule (default sm1539)")
    d.add_argument("--percent", metavar="P", default="250", help="for --boundary percent: percent of the bandwidth (default 250)")
    add_option(d, "--authorized-bw", detail="for --boundary percent of it")
    add_emission_options(d, with_designator=False)
    add_option(d, "--json", detail="the decoded designator, its necessary bandwidth and domains")
    add_option(d, "--force", action="store_true")
    d.set_defaults(run=run)


@contextmanager
def _designator_named(where: str):
    """Errors about the designator name this command's own input (``CODE`` or ``--emission``), not ``--designator``."""
    from ..errors import StationError
    from ._options import with_options

    try:
        yield
    except StationError as exc:
        if exc.param not in ("designator", "emission"):
            raise
        message = exc.message
        if message.startswith(f"{exc.param}="):
            message = message.split(": ", 1)[-1]
        raise StationError(with_options(message), where=where) from None


def run(args) -> int:
    from ..core.designator import parse_designator
    from ..core.domains import domains
    from ..core.necessary import resolve_necessary
    from ..core.units import format_frequency, parse_frequency
    from ..errors import StationError

    if args.json and args.json != "-":
        from ..io.output import check_writable

        check_writable(args.json, args.force)
    if args.code and args.emission:
        raise StationError("give a designator or --emission, not both", where="--emission")
    text = args.code or args.emission
    if not text:
        raise StationError("give a designator (e.g. 2K70J3E) or --emission CLASS with the formula inputs", where="CODE")
    where = "--emission" if args.emission else "CODE"
    with _designator_named(where):
        des = parse_designator(text)
    inputs = formula_inputs(args)
    stated = None
    if args.necessary_bw:
        if args.necessary_bw.strip().lower() == "measured":
            raise StationError("'measured' needs a trace: use it with maskcheck check", where="--necessary-bw")
        stated = parse_frequency(args.necessary_bw, what="--necessary-bw", default_unit="Hz")
    nb, warnings = (None, [])
    if des.bandwidth_hz is not None or stated is not None or any(v is not None for k, v in inputs.items() if k != "wpm_convention"):
        with _designator_named(where):
            nb, warnings = resolve_necessary(des.text, stated_hz=stated, inputs=inputs)
    out = {"designator": (nb.designator if nb else des.text), "parts": [], "necessary_bandwidth": None, "domains": None, "warnings": warnings}
    shown = parse_designator(out["designator"]) if nb else des
    out["parts"] = [{"part": p, "position": n, "meaning": m} for p, n, m in shown.describe()]
    if nb is not None:
        out["necessary_bandwidth"] = nb.to_dict()
    if args.carrier:
        if nb is None:
            raise StationError(f"{des.text} states no bandwidth: give the formula inputs or --necessary-bw to place the domains", where="--carrier")
        carrier = parse_frequency(args.carrier, what="--carrier")
        auth = parse_frequency(args.authorized_bw, what="--authorized-bw", default_unit="Hz") if args.authorized_bw else None
        of = "authorized" if auth is not None else "necessary"
        percent = _number(args.percent, "--percent")
        if not (math.isfinite(percent) and percent > 0):
            raise StationError(f"{args.percent!r} must be a finite percentage > 0", where="--percent")
        dom = domains(carrier, nb.bandwidth_hz, rule=args.boundary, percent=percent, of=of, authorized_bw_hz=auth)
        out["domains"] = {
            "carrier_hz": carrier,
            "boundary": dom.boundary.to_dict(),
            "spans": [s.to_dict() for s in dom.spans(max(0.0, carrier - 2 * dom.boundary.offset_hz), carrier + 2 * dom.boundary.offset_hz)],
            "notes": list(dom.notes),
        }
    if args.json:
        from ..io.output import write_text

        write_text(args.json, json.dumps(out, indent=2) + "\n", force=args.force)
        if args.json == "-":
            return 0
    con = console()
    con.print(f"[bold]{out['designator']}[/bold]")
    for part in out["parts"]:
        con.print(f"  {part['part']:<5} {part['position']}: {part['meaning']}")
    if nb is not None:
        con.print(f"necessary bandwidth {format_frequency(nb.bandwidth_hz)}, from {nb.formula if nb.method != 'formula' else 'the formula'}")
        if nb.arithmetic:
            con.print(f"  {nb.arithmetic}")
            con.print(f"  source: {nb.source}; status: {nb.status}")
        for n in nb.notes:
            con.print(f"  note: {n}")
    if out["domains"]:
        b = out["domains"]["boundary"]
        con.print(f"domain boundary at +- {format_frequency(b['offset_hz'])} from {format_frequency(out['domains']['carrier_hz'])} ({b['rule']}, {b['case']}): {b['text']}")
        for s in out["domains"]["spans"]:
            if "spurious" not in s["name"]:
                con.print(f"  {s['name']:<27} {format_frequency(s['start_hz'], 9)} to {format_frequency(s['stop_hz'], 9)}")
        lo, hi = dom.boundary_hz
        con.print(f"  spurious domain             below {format_frequency(lo, 9)} and above {format_frequency(hi, 9)}")
        for n in out["domains"]["notes"]:
            con.print(f"  [yellow]!! {n}[/yellow]")
    for w in warnings:
        con.print(f"[yellow]warning:[/yellow] {w}")
    con.print("[italic]Screening aid: the regulator decides the necessary and authorised bandwidth of a station.[/italic]")
    if args.json:
        con.print(f"written: {args.json}")
    return 0
