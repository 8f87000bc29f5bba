"""``maskcheck twotone``: the two-tone test read off a recording or trace(s): PEP, mean power, IMD products.

Resolution: a recording given without ``--rbw`` or ``--segment`` is first
estimated at the finest resolution it affords with
:data:`LOCATE_AVERAGES` averages, the two tones are found there, and it is
estimated again with the RBW chosen from their spacing
(:func:`maskcheck.core.twotone.rbw_for_spacing`).  A trace, or a recording
with an RBW given, is analysed at its own RBW; tones it does not resolve are
refused with the RBW that would resolve them.

Levels: ``--setup`` corrects the readings with the setup's chain and
``--attenuator`` adds a fixed pad after it, both through
:meth:`maskcheck.io.setup.MeasurementSetup.apply` (the code ``check --setup``
uses; the pad is one more chain part, :func:`maskcheck.io.setup.with_attenuator`).
"""

from __future__ import annotations

from pathlib import Path

from ._setup_options import setup_from_args
from ._common import add_trace_options, console
from ._recording import add_recording_options
from ._spelling import add_identity_options, add_option

__all__ = ["register", "run", "LOCATE_AVERAGES", "LOCATE_MAX_SEGMENT", "LOCATE_FINEST_RBW_HZ"]

#: the locating estimate keeps at least this many averaged segments (50 % overlap)
LOCATE_AVERAGES = 8
#: and segments of at most this many samples (bounds its memory: 8 MiB a segment)
LOCATE_MAX_SEGMENT = 1 << 20
#: and no finer RBW than this, Hz (audio tone spacings of a two-tone test are 100 Hz and more)
LOCATE_FINEST_RBW_HZ = 1.0


def register(sub) -> None:
    t = sub.add_parser("twotone", help="two-tone test: PEP, mean power and the 3rd-9th order products",
                       description="Find the two tones of a two-tone test in an IQ recording or trace(s) and report "
                                   "PEP, mean power and the 3rd, 5th, 7th and 9th order products, both below PEP "
                                   "and below one tone (the two differ by 6.02 dB for equal tones), the carrier leak "
                                   "and the opposite sideband (with --carrier), and every other line near the tones. "
                                   "A recording is estimated with an RBW chosen from the tone spacing unless --rbw "
                                   "or --segment is given.")
    t.add_argument("inputs", nargs="+", metavar="REC|TRACE", help="an IQ recording or trace file(s) around the fundamental")
    t.add_argument("--band", metavar="BW", help="band integrated around each line (default 8 RBW)")
    add_option(t, "--carrier", detail="the suppressed carrier: its leak and the opposite sideband are measured")
    add_identity_options(t)
    add_option(t, "--setup")
    add_option(t, "--attenuator")
    add_trace_options(t)
    add_recording_options(t, time_resolved=False)
    add_option(t, "--json")
    add_option(t, "--report", detail="the plot around the tones, the products and the cautions")
    add_option(t, "--force", action="store_true")
    add_option(t, "--quiet", action="store_true")
    t.set_defaults(run=run)


def _trace(args) -> str:
    """The trace of a recording: ``--trace max-hold`` or the average (``auto``: no mask asks for a peak here)."""
    return "max-hold" if args.trace == "max-hold" else "average"


#: options that only recordings use, with their defaults: given for traces alone they are refused
def _read(args, *, rbw_hz=None):
    """Read every input; recordings with ``rbw_hz`` when given (the options otherwise)."""
    from argparse import Namespace

    from ._recording import read_input

    if rbw_hz is None:
        return read_input(args.inputs, args, trace=_trace(args))
    a = Namespace(**vars(args))
    a.rbw, a.segment = f"{rbw_hz!r}Hz", None
    return read_input(args.inputs, a, trace=_trace(args))


def _read_resolved(args):
    """Read the inputs at a resolution that fits the tone spacing; (InputSet, spectrum, resolution record)."""
    from argparse import Namespace

    from ..core.twotone import locate_tones, rbw_for_spacing
    from ..errors import SpectrumError, TraceError
    from ._recording import is_recording, open_input_recording, read_input

    label = " + ".join(args.inputs)
    recordings = [p for p in args.inputs if is_recording(p, args)]
    if args.rbw or args.segment or len(recordings) != len(args.inputs):
        got = read_input(args.inputs, args, trace=_trace(args))
        how = ("the trace's own" if not recordings else "given (--rbw)" if args.rbw else
               "given (--segment)" if args.segment else "as given (traces and recordings together)")
        return got, _stitch(got, label), {"method": how, "rbw_hz": None}
    # a locating pass at the finest resolution every recording affords, then the RBW from the spacing
    seg = LOCATE_MAX_SEGMENT
    for p in recordings:
        rec = open_input_recording(p, args)
        shortest = min((c.sample_count for c in rec.captures if c.sample_count > 0), default=rec.num_samples)
        seg = min(seg, int(shortest / (0.5 * LOCATE_AVERAGES + 0.5)), int(2 * rec.sample_rate_hz / LOCATE_FINEST_RBW_HZ))
    seg = max(seg, 64)
    a = Namespace(**vars(args))
    a.segment = seg
    located = read_input(args.inputs, a, trace=_trace(args))
    coarse = _stitch(located, label)
    try:
        fa, fb = locate_tones(coarse)
    except SpectrumError as exc:
        raise TraceError(f"{exc.message} (located with {seg} samples per segment, the finest resolution this recording "
                         f"gives with {LOCATE_AVERAGES} averages)", path=label) from None
    want = rbw_for_spacing(fb - fa)
    finest = float(coarse.rbw_hz.min())  # the locating estimate's RBW: the finest the recording gives
    rbw = max(want, finest)
    got = _read(args, rbw_hz=rbw)
    record = {"method": "chosen from the tone spacing", "spacing_hz": fb - fa, "rbw_wanted_hz": want,
              "rbw_hz": None, "locate_segment_samples": seg,
              "note": (f"RBW = spacing / {int(round((fb - fa) / want))}" if rbw == want else
                       f"the recording is too short for RBW {want:.3g} Hz with {LOCATE_AVERAGES} averages; "
                       f"the finest it gives is used")}
    return got, _stitch(got, label), record


def _stitch(got, label):
    from ..core.spectrum import stitch
    from ..errors import SpectrumError, TraceError

    try:
        return stitch(got.spectra)
    except SpectrumError as exc:
        raise TraceError(f"cannot join the inputs: {exc.message}", path=label) from None


def run(args) -> int:
    import json

    from ..core.twotone import ORDERS, analyse_two_tone
    from ..core.units import format_frequency, parse_frequency
    from ..errors import OutputError, SpectrumError, TraceError, UnitError
    from ..io.output import check_writable, write_atomic, write_text
    from ._recording import is_recording

    if args.json and args.json != "-":
        check_writable(args.json, args.force)
    if args.report:
        check_writable(args.report, args.force)
        if args.json and args.json != "-" and Path(args.json).resolve() == Path(args.report).resolve():
            raise OutputError("is given for both --json and --report; expected two different files", path=args.report)
    band = parse_frequency(args.band, what="--band", default_unit="Hz") if args.band else None
    carrier = parse_frequency(args.carrier, what="--carrier") if args.carrier else None
    setup = setup_from_args(args)
    traces = [p for p in args.inputs if not is_recording(p, args)]
    label = " + ".join(args.inputs)
    got, spectrum, resolution = _read_resolved(args)
    if setup is not None:
        if spectrum.level_scale == "dBFS":
            # refused, never ignored: a pad added to levels relative to full scale gives no power
            raise UnitError("correct levels at the transmitter output, but the recording is uncalibrated (dBFS): "
                            "calibrate it with --full-scale or --ref-tone",
                            where="--setup" if args.setup else "--attenuator")
        spectrum = setup.apply(spectrum)
    resolution["rbw_hz"] = float(spectrum.rbw_hz.min()) if spectrum.rbw_hz.min() == spectrum.rbw_hz.max() else None
    try:
        res = analyse_two_tone(spectrum, band_hz=band, carrier_hz=carrier)
    except SpectrumError as exc:
        hint = ""
        about_rbw = "not resolved" in exc.message or "narrower RBW would tell" in exc.message
        if about_rbw and len(traces) < len(args.inputs) and (args.rbw or args.segment):
            hint = "; or leave --rbw and --segment out: the RBW of a recording is then chosen from the tone spacing"
        raise TraceError(exc.message + hint, path=label, param=exc.param) from None
    unit = spectrum.level_scale
    inputs = list(got.inputs)
    if setup is not None and setup.path:
        from ..core.result import InputFile

        inputs.append(InputFile(setup.path, setup.sha256))
    if len(traces) < len(args.inputs):
        resolution["trace"] = _trace(args)
    data = {"inputs": [{"path": i.path, "sha256": i.sha256} for i in inputs], "level_unit": unit,
            "resolution": resolution, **res.to_dict(),
            "detector": spectrum.detector, "notes": list(spectrum.notes),
            "estimation": None if spectrum.estimation is None else spectrum.estimation.to_dict(),
            "calibration": None if spectrum.calibration is None else spectrum.calibration.to_dict(),
            "setup": None if spectrum.setup is None else spectrum.setup.to_dict(),
            "corrections": None if spectrum.corrections is None else spectrum.corrections.to_dict()}
    warnings = list(res.warnings) + ([] if spectrum.corrections is None else list(spectrum.corrections.warnings))
    if carrier is None:
        warnings.append("the suppressed carrier was not given (--carrier): its leak and the opposite sideband are not "
                        "measured; such lines are listed among the other lines")
    data["warnings"] = warnings
    from ..core.station import Station

    who = Station(carrier_hz=carrier or res.f1_hz, name=args.station.strip(), equipment=args.equipment.strip())
    data["station"] = {"name": who.name, "equipment": who.equipment}
    to_stdout = args.json == "-"
    if not args.quiet:
        from rich.markup import escape

        from ..report.term_layout import facts, grid, heading

        con = console(stderr=to_stdout)
        d = res.to_dict()
        con.print(heading(con, f"two-tone test of {label}"))
        pairs = [("station", who.label())] if who.label() else []
        pairs += [("tones", f"{format_frequency(res.f1_hz)} and {format_frequency(res.f2_hz)}"),
                  ("spacing", f"{res.spacing_hz:.6g} Hz ({res.spacing_hz / res.rbw_hz:.3g} RBW)"),
                  ("tone imbalance", f"{res.tone_imbalance_db:+.2f} dB"),
                  ("RBW", f"{res.rbw_hz:.4g} Hz ({resolution['method']})")]
        if spectrum.corrections is not None:
            c = spectrum.corrections
            span = (f"{c.total_db_min:+.2f} dB" if c.total_db_min == c.total_db_max
                    else f"{c.total_db_min:+.2f} to {c.total_db_max:+.2f} dB")
            parts = ", ".join(f"{a.correction.name} {a.applied_min_db:+.2f} dB" for a in c.applied)
            pairs.append(("levels corrected", f"by {span} ({parts}): {c.quantity}"))
        pairs += [("PEP", f"{d['pep_dbm']:.2f} {unit}"), ("mean power", f"{d['mean_dbm']:.2f} {unit}"),
                  ("PEP/mean", f"{d['pep_to_mean_db']:.2f} dB")]
        if res.floor_w is not None:
            pairs.append(("floor", f"{d['floor_db_re_one_tone']:.2f} dB re one tone in a {res.band_hz:.4g} Hz line band"))
        if res.carrier is not None:
            pairs.append(("sideband suppression", res.carrier.suppression_text()))
        con.print(facts(con, pairs))
        rows = [(str(k), p.side + (" (worse)" if p is res.worst(k) and not p.below_floor else ""),
                 format_frequency(p.freq_hz, 9), p.describe("tone"), p.describe("pep"))
                for k in ORDERS for p in res.products if p.order == k]
        con.print(grid(con, ("order", "side", "frequency", "dB re one tone", "dB re PEP"), rows,
                       title="Intermodulation products", right=(0, 3, 4), keys=(0, 1)))
        lines = []
        if res.carrier is not None:
            c = res.carrier
            lines.append(("carrier leak", format_frequency(c.carrier_hz, 9), c.leak.describe("tone"),
                          c.leak.describe("pep"), f"suppressed carrier ({c.sideband} sideband)"))
            lines += [(i.name, format_frequency(i.freq_hz, 9), i.describe("tone"), i.describe("pep"),
                       "opposite sideband") for i in c.images]
        lines += [("other line", format_frequency(x.freq_hz, 9), x.describe("tone"), x.describe("pep"), x.name)
                  for x in res.other_lines]
        if lines:
            con.print(grid(con, ("line", "frequency", "dB re one tone", "dB re PEP", "what it is"), lines,
                           title="Carrier, opposite sideband and other lines", right=(1, 2, 3), keys=(0, 1),
                           max_row_lines=3))
        if res.other_lines_left_out:
            con.print(f"... and {res.other_lines_left_out} weaker other lines, not listed")
        for w in warnings:
            con.print(f"[yellow]warning:[/yellow] {escape(w)}")
        con.print("Pre-compliance aid: the regulator and accredited laboratories decide.")
    if args.report:
        from ..report.twotone_pdf import build_twotone_report

        how = resolution["method"] + (f" ({resolution['note']})" if resolution.get("note") else "")
        pdf = build_twotone_report(spectrum, res, inputs, level_unit=unit, resolution=how, station=who.label())  # built before anything is written
    if args.json:
        write_text(args.json, json.dumps(data, indent=2, allow_nan=False) + "\n", force=args.force)
    if args.report:
        write_atomic(args.report, pdf, force=args.force)
        if not args.quiet:
            console(stderr=to_stdout).print(f"report written to {args.report}")
    return 0
