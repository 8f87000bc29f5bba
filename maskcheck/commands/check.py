"""``maskcheck check``: judge one or more trace spans against a mask."""

from __future__ import annotations

from ._common import add_trace_options
from ._outputs import add_output_options, check_output_options, write_outputs
from ._recording import add_recording_options
from ._setup_options import setup_from_args
from ._spelling import add_identity_options, add_option
from .designator import add_emission_options
from .masks_which import add_choice_options, chosen_mask, refuse_choice_options_with_mask

__all__ = ["register", "run"]


def register(sub) -> None:
    c = sub.add_parser("check", help="judge a trace against a mask", description="Judge one trace (or several spans stitched together) against a mask.")
    c.add_argument("traces", nargs="+", metavar="INPUT", help="trace file(s) or IQ recording(s); several spans are stitched, a narrower RBW wins where they overlap")
    add_option(c, "--mask", detail="without it maskcheck takes the one mask that --carrier and the options below single out ('maskcheck masks which'), and refuses when the choice is ambiguous")
    add_option(c, "--carrier", required=True,
               detail="the assigned frequency, the centre of the emission (with --sideband, the suppressed carrier of an SSB emission)")
    add_option(c, "--power", detail="default: the measured channel power")
    add_option(c, "--pep")
    c.add_argument("--exclude", metavar="BW", help="half-width of the fundamental window around the carrier, an explicit override (default: the out-of-band domain of the emission, else the mask's)")
    add_option(c, "--authorized-bw", metavar="BW|necessary",
               detail="the occupied bandwidth must not exceed it ('necessary': the necessary bandwidth)")
    add_emission_options(c)
    add_identity_options(c)
    add_option(c, "--setup", detail="see 'maskcheck plan'")
    add_option(c, "--attenuator")
    add_option(c, "--guard", detail="default: the expanded uncertainty of the setup's [uncertainty] budget, else 0dB; a value typed here wins over the budget")
    c.add_argument("--list-within", metavar="DB", default="20dB", help="list emissions within this of the limit (default 20dB, after 47 CFR 2.1057(c))")
    c.add_argument("--power-tolerance", metavar="DB",
                   help="how far the stated and the measured mean power may differ before the readings cannot be judged "
                        "(default 3dB for a steady carrier, 10dB for single sideband; see the README)")
    add_option(c, "--xdb", default="26dB", detail="reported beside the occupied bandwidth (default 26dB)")
    add_option(c, "--outside-bands", action="store_true", detail="the verdict is then at best incomplete")
    add_option(c, "--mask-dir", action="append", default=[])
    add_choice_options(c.add_argument_group("choosing the mask (without --mask; see 'maskcheck masks which')"))
    add_trace_options(c)
    add_recording_options(c)
    add_option(c, "--json")
    add_option(c, "--report", detail="the result JSON and the mask file ride inside it as attachments")
    add_option(c, "--attach-inputs", action="store_true")
    add_option(c, "--remeasure", detail="written by check; 'maskcheck plan --remeasure PATH' reads it")
    add_output_options(c)
    add_option(c, "--force", action="store_true")
    add_option(c, "--quiet", action="store_true")

    c.set_defaults(run=run)


def run(args) -> int:
    from ..core.spectrum import stitch
    from ..core.station import Station
    from ..core.units import parse_db, parse_frequency, parse_power
    from ..errors import SpectrumError, TraceError
    from ..masks.library import load_mask

    # refuse before any work when an output exists, two outputs name one file, or --figures holds old figures
    check_output_options(args, planned=[("--remeasure", args.remeasure)])
    if args.attach_inputs and not args.report:
        from ..errors import OutputError

        raise OutputError("embeds the input files in the PDF report; give --report PDF too", where="--attach-inputs")
    refuse_choice_options_with_mask(args)
    carrier = parse_frequency(args.carrier, what="--carrier")
    power = parse_power(args.power, what="--power") if args.power else None
    pep = parse_power(args.pep, what="--pep") if args.pep else None
    exclude = parse_frequency(args.exclude, what="--exclude") if args.exclude else None
    guard = parse_db(args.guard, what="--guard") if args.guard is not None else None
    from .designator import emission_from_args

    necessary, authorized, _ = emission_from_args(args, args.designator)
    within = parse_db(args.list_within, what="--list-within")
    xdb = parse_db(args.xdb, what="--xdb")
    tolerance = parse_db(args.power_tolerance, what="--power-tolerance") if args.power_tolerance else None
    # with --sideband, the check places the emission's centre from the suppressed carrier (checking/emission.py)
    low_mod = parse_frequency(args.low_mod, what="--low-mod", default_unit="Hz") if getattr(args, "low_mod", None) else None
    station = Station(carrier_hz=carrier, power_w=power, pep_w=pep, designator=args.designator.strip().upper() if args.designator else None,
                      sideband=getattr(args, "sideband", None), low_mod_hz=low_mod, name=args.station.strip(),
                      equipment=args.equipment.strip())
    mask, chosen = chosen_mask(args) if args.mask is None else (load_mask(args.mask, extra_dirs=args.mask_dir), "")
    from ..masks.station_values import require_in_bands

    require_in_bands(mask, carrier, outside_bands=args.outside_bands)  # before any input is read; check() decides again
    setup = setup_from_args(args)
    from ._recording import choose_trace, is_recording, read_input, worst_frame_check

    got = read_input(args.traces, args, trace=choose_trace(args, mask))
    spectra = got.spectra
    try:
        spectrum = stitch(spectra)
    except SpectrumError as exc:
        raise TraceError(f"cannot join the traces: {exc.message}", path=" + ".join(args.traces)) from None
    inputs = got.inputs  # check() adds the setup file, when there is one (a pad alone is a correction, no file)
    from ..checking import check

    def judge(s):
        if setup is not None:
            s = setup.apply(s)
        return check(s, mask, station, guard_db=guard, exclude_hz=exclude, report_threshold_db=within, inputs=inputs,
                     power_tolerance_db=tolerance, outside_bands=args.outside_bands,
                     judge_artefacts=args.judge_artefacts, necessary=necessary, authorized_bw_hz=authorized, xdb_db=xdb)

    result = judge(spectrum)
    # time-resolved recordings: the worst frame is judged too (see _recording.worst_frame_check)
    result = worst_frame_check(result, got, judge)
    if chosen:  # the mask maskcheck took without --mask: every output says so
        import dataclasses

        result.mask = dataclasses.replace(result.mask, chosen=chosen)
    attachments = None
    if args.attach_inputs:
        from ..report.attachments import input_attachments

        attachments = input_attachments(result, result.inputs, recordings=[p for p in args.traces if is_recording(p, args)])
    write_outputs(result, args, attachments=attachments)
    if args.remeasure:
        write_remeasure(result, args)
    return result.exit_code


def write_remeasure(result, args) -> None:
    """``--remeasure PATH``: the re-measure list as JSON (written through the run's ledger)."""
    import json

    from ..io.output import write_text
    from ..io.remeasure import remeasure_document

    write_text(args.remeasure, json.dumps(remeasure_document(result), indent=2, ensure_ascii=False) + "\n", force=args.force)
    if not args.quiet and args.json != "-" and getattr(args, "csv", None) != "-":
        from ._common import console

        console().print(f"written: {args.remeasure} ({len(result.remeasure.items)} reading(s) to re-measure)")
