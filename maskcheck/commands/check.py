"""``maskcheck check``: judge one or more trace spans against a mask."""

from __future__ import annotations

from ._common import add_trace_options
from ._outputs import add_output_options, check_output_options, write_outputs
from ._recording import add_recording_options
from ._setup_options import setup_from_args
from .designator import add_emission_options
from .masks_which import add_choice_options, chosen_mask, refuse_choice_options_with_mask

__all__ = ["register", "run"]


def register(sub) -> None:
    c = sub.add_parser("check", help="judge a trace against a mask", description="Judge one trace (or several spans stitched together) against a mask.")
    c.add_argument("traces", nargs="+", metavar="INPUT", help="trace file(s) or IQ recording(s); several spans are stitched, a narrower RBW wins where they overlap")
    c.add_argument("--mask", metavar="ID|FILE", help="mask id from 'maskcheck masks list', or a mask TOML file; without it "
                   "maskcheck takes the one mask that --carrier and the options below single out ('maskcheck masks "
                   "which'), and refuses when the choice is ambiguous")
    c.add_argument("--carrier", required=True, metavar="F", help="assigned frequency (centre of the emission; with --sideband, the suppressed carrier of an SSB emission), e.g. 7.1MHz")
    c.add_argument("--power", metavar="P", help="mean power at the antenna port, e.g. 100W or 50dBm (default: measured channel power)")
    c.add_argument("--pep", metavar="P", help="peak envelope power, for PEP-referenced rules")
    c.add_argument("--exclude", metavar="BW", help="half-width of the fundamental window around the carrier, an explicit override (default: the out-of-band domain of the emission, else the mask's)")
    c.add_argument("--authorized-bw", metavar="BW|necessary", help="authorised bandwidth: the occupied bandwidth must not exceed it ('necessary': the necessary bandwidth)")
    add_emission_options(c)
    c.add_argument("--setup", metavar="TOML", help="measurement setup: the chain (attenuators, cables; antenna factor and distance if radiated) corrects every reading; see 'maskcheck plan'")
    c.add_argument("--attenuator", metavar="DB", help="a fixed pad ahead of the analyser, e.g. 40dB, added to every reading (after the setup's chain)")
    c.add_argument("--guard", metavar="DB", default="0dB", help="guard band: margins below it are 'marginal' (default 0dB)")
    c.add_argument("--list-within", metavar="DB", default="20dB", help="list emissions within this of the limit (default 20dB, after 47 CFR 2.1057(c))")
    c.add_argument("--power-tolerance", metavar="DB",
                   help="how far the stated and the measured mean power may differ before the readings cannot be judged "
                        "(default 3dB for a steady carrier, 10dB for single sideband; see the README)")
    c.add_argument("--xdb", metavar="DB", default="26dB", help="x of the x-dB bandwidth reported beside the occupied bandwidth (default 26dB)")
    c.add_argument("--outside-bands", action="store_true", help="check a carrier outside the mask's carrier bands anyway (refused otherwise); every output then says so and the verdict is at best incomplete")
    c.add_argument("--mask-dir", action="append", default=[], metavar="DIR", help="extra folder of mask files (repeatable; also MASKCHECK_MASK_PATH)")
    add_choice_options(c.add_argument_group("choosing the mask (without --mask; see 'maskcheck masks which')"))
    add_trace_options(c)
    add_recording_options(c)
    c.add_argument("--json", metavar="PATH", help="write the result as JSON ('-' for standard output)")
    c.add_argument("--report", metavar="PDF", help="write the PDF evidence report (the result JSON and the mask file ride inside it as attachments)")
    add_output_options(c)
    c.add_argument("--force", action="store_true", help="overwrite existing output files")
    c.add_argument("--quiet", action="store_true", help="print no summary")

    c.set_defaults(run=run)


def run(args) -> int:
    from ..core.result import InputFile
    from ..core.spectrum import stitch
    from ..core.station import Station
    from ..core.units import parse_db, parse_frequency, parse_power
    from ..errors import SpectrumError, TraceError
    from ..masks.library import load_mask

    # refuse before any work when an output exists, two outputs name one file, or --figures holds old figures
    check_output_options(args)
    refuse_choice_options_with_mask(args)
    carrier = parse_frequency(args.carrier, what="--carrier")
    power = parse_power(args.power, what="--power") if args.power else None
    pep = parse_power(args.pep, what="--pep") if args.pep else None
    exclude = parse_frequency(args.exclude, what="--exclude") if args.exclude else None
    guard = parse_db(args.guard, what="--guard")
    from .designator import emission_from_args

    necessary, authorized, _ = emission_from_args(args, args.designator)
    within = parse_db(args.list_within, what="--list-within")
    xdb = parse_db(args.xdb, what="--xdb")
    tolerance = parse_db(args.power_tolerance, what="--power-tolerance") if args.power_tolerance else None
    # with --sideband, the check places the emission's centre from the suppressed carrier (checking/emission.py)
    low_mod = parse_frequency(args.low_mod, what="--low-mod", default_unit="Hz") if getattr(args, "low_mod", None) else None
    station = Station(carrier_hz=carrier, power_w=power, pep_w=pep, designator=args.designator.strip().upper() if args.designator else None,
                      sideband=getattr(args, "sideband", None), low_mod_hz=low_mod)
    mask, chosen = chosen_mask(args) if args.mask is None else (load_mask(args.mask, extra_dirs=args.mask_dir), "")
    from ..masks.station_values import require_in_bands

    require_in_bands(mask, carrier, outside_bands=args.outside_bands)  # before any input is read; check() decides again
    setup = setup_from_args(args)
    from ._recording import choose_trace, read_input, worst_frame_check

    got = read_input(args.traces, args, trace=choose_trace(args, mask))
    spectra = got.spectra
    try:
        spectrum = stitch(spectra)
    except SpectrumError as exc:
        raise TraceError(f"cannot join the traces: {exc.message}", path=" + ".join(args.traces)) from None
    inputs = got.inputs
    if setup is not None:
        inputs = [*inputs, InputFile(setup.path, setup.sha256)]
    from ..checking import check

    def judge(s):
        if setup is not None:
            s = setup.apply(s)
        return check(s, mask, station, guard_db=guard, exclude_hz=exclude, report_threshold_db=within, inputs=inputs,
                     power_tolerance_db=tolerance, outside_bands=args.outside_bands,
                     necessary=necessary, authorized_bw_hz=authorized, xdb_db=xdb)

    result = judge(spectrum)
    # time-resolved recordings: the worst frame is judged too (see _recording.worst_frame_check)
    result = worst_frame_check(result, got, judge)
    if chosen:  # the mask maskcheck took without --mask: every output says so
        import dataclasses

        result.mask = dataclasses.replace(result.mask, chosen=chosen)
    write_outputs(result, args)
    return result.exit_code
