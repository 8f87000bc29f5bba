"""IQ recordings on the command line: their options, and reading any input.

:func:`read_input` is what ``maskcheck check`` and ``maskcheck spectrum``
call: SigMF and WAV files are recognised by their extension, any other file
is a recording when ``--format`` is given (raw I/Q) and a trace otherwise.
Recordings are estimated (:mod:`maskcheck.io.iq_spectrum`) with a progress
bar once the work takes more than a couple of seconds.
"""

from __future__ import annotations

import hashlib
import time
from dataclasses import dataclass, field

__all__ = ["add_recording_options", "read_input", "InputSet", "is_recording", "open_input_recording"]

#: seconds of work before a progress bar appears
PROGRESS_AFTER_S = 2.0


def add_recording_options(sp, *, time_resolved: bool = True) -> None:
    """Options for IQ recordings (SigMF, WAV, raw)."""
    g = sp.add_argument_group(
        "IQ recordings",
        "SigMF (.sigmf-meta/.sigmf-data/.sigmf), two-channel WAV (.wav) or raw I/Q (with --format). "
        "--rbw chooses the segment length whose noise bandwidth is that RBW.",
    )
    from ._spelling import add_option

    add_option(g, "--format")
    add_option(g, "--rate")
    add_option(g, "--centre", alias="--center")
    add_option(g, "--i-channel", choices=["left", "right"], default="left")
    add_option(g, "--window", default="blackman-harris")
    add_option(g, "--overlap", default="50%")
    add_option(g, "--segment", type=int)
    add_option(g, "--trace", choices=["auto", "average", "max-hold"], default="auto")
    if time_resolved:
        add_option(g, "--frame")
    add_option(g, "--full-scale")
    add_option(g, "--ref-tone")
    add_option(g, "--correction")
    add_option(g, "--workers", type=int, detail="here estimation threads (default: all CPUs)")
    add_option(g, "--usable-fraction")
    if time_resolved:
        add_option(g, "--judge-artefacts", action="store_true")


def is_recording(path, args) -> bool:
    from ..io.iq import recording_kind

    return recording_kind(path) is not None or getattr(args, "format", None) is not None


@dataclass
class InputSet:
    """What was read: the spectra (one per input) and their provenance."""

    spectra: list
    inputs: list  # InputFile
    recordings: list = field(default_factory=list)  # RecordingSpectrum, for the time-resolved mode


def _overlap(text: str) -> float:
    from ..errors import UnitError

    s = str(text).strip()
    try:
        v = float(s[:-1]) / 100.0 if s.endswith("%") else float(s)
    except ValueError:
        raise UnitError(f"{text!r} is not an overlap; expected a percentage such as 50% or a fraction such as 0.5", where="--overlap") from None
    return v


def _window(text: str):
    """``--window NAME`` or ``kaiser:BETA`` -> (the spelled name, beta or None); library names are aliases."""
    from ..core.estimate import window_name
    from ..errors import UnitError

    name, _, beta = str(text).partition(":")
    name = window_name(name)
    if beta:
        try:
            return name, float(beta)
        except ValueError:
            raise UnitError(f"{text!r}: {beta!r} is not a number; expected e.g. kaiser:14", where="--window") from None
    return name, None


def _calibration(args):
    from ..core.units import parse_frequency, parse_power
    from ..errors import UnitError
    from ..io.correction import read_correction
    from ..io.iq_spectrum import Calibration

    full = parse_power(args.full_scale, what="--full-scale") if args.full_scale else None
    tone_hz = tone_w = None
    if args.ref_tone:
        f, sep, p = args.ref_tone.partition("=")
        if not sep:
            raise UnitError(f"{args.ref_tone!r}; expected FREQUENCY=POWER, e.g. 7.1MHz=-10dBm", where="--ref-tone")
        tone_hz = parse_frequency(f, what="--ref-tone")
        tone_w = parse_power(p, what="--ref-tone")
    if full is not None and tone_hz is not None:
        raise UnitError("give --full-scale or --ref-tone, not both", where="--ref-tone")
    corr = read_correction(args.correction) if args.correction else None
    return Calibration(full, tone_hz, tone_w, corr)


class _Progress:
    """A rich progress bar that appears only when the work lasts."""

    def __init__(self, label: str):
        self.label = label
        self.t0 = time.monotonic()
        self.bar = None
        self.task = None

    def __call__(self, done: int, total: int) -> None:
        if self.bar is None:
            if time.monotonic() - self.t0 < PROGRESS_AFTER_S:
                return
            from rich.progress import BarColumn, Progress, TextColumn, TimeRemainingColumn

            from ._common import console

            self.bar = Progress(TextColumn("{task.description}"), BarColumn(), TextColumn("{task.percentage:>3.0f}%"),
                                TimeRemainingColumn(), console=console(stderr=True), transient=True)
            self.bar.start()
            self.task = self.bar.add_task(self.label, total=total)
        self.bar.update(self.task, completed=done)

    def close(self) -> None:
        if self.bar is not None:
            self.bar.stop()


def estimate_args(args, trace: str):
    """Keyword arguments of :func:`maskcheck.io.iq_spectrum.estimate_recording` from the options."""
    from ..core.units import parse_frequency

    window, beta = _window(args.window)
    rbw = parse_frequency(args.rbw, what="--rbw", default_unit="Hz") if args.rbw else None
    frame = getattr(args, "frame", None)
    frame_s = None
    if frame:
        frame_s = _duration(frame)
    kw = dict(window=window, kaiser_beta=beta, rbw_hz=rbw, segment_samples=args.segment, overlap=_overlap(args.overlap),
              trace=trace, frame_s=frame_s, calibration=_calibration(args), workers=args.workers)
    if getattr(args, "usable_fraction", None) is not None:
        kw["usable_fraction"] = _fraction(args.usable_fraction)
    return kw


def _fraction(text: str) -> float:
    """``--usable-fraction``: a percentage (80%) or a fraction (0.8), above 0 and at most 1."""
    from ..errors import UnitError

    v = _overlap(text) if str(text).strip().endswith("%") else None
    if v is None:
        try:
            v = float(str(text).strip())
        except ValueError:
            v = float("nan")
    if not (0 < v <= 1):
        raise UnitError(f"{text!r} is not a usable fraction; expected a percentage above 0 and at most 100 %, "
                        "e.g. 80%, or a fraction such as 0.8", where="--usable-fraction")
    return v


def _duration(text: str) -> float:
    """``--frame``: a duration > 0 (units in any case: 50ms, 50 MS, 0.2s)."""
    from ..core.units import parse_duration
    from ..errors import UnitError

    v = parse_duration(str(text).strip().lower(), what="--frame")
    if not v > 0:
        raise UnitError(f"{text!r} is not a frame duration; expected one longer than 0 s, e.g. 50ms or 0.2s", where="--frame")
    return v


def open_input_recording(path, args):
    """Open one recording named on the command line (no samples read yet); raw I/Q needs its options."""
    from ..core.units import parse_frequency
    from ..io.iq import open_recording, recording_kind

    rate = parse_frequency(args.rate, what="--rate") if args.rate else None
    centre = parse_frequency(args.centre, what="--centre") if args.centre else None
    if recording_kind(path) is None:  # raw I/Q: the options say what the file does not
        missing = [o for o, v in (("--format", args.format), ("--rate", rate), ("--centre", centre)) if v is None]
        if missing:
            from ..errors import RecordingError

            raise RecordingError(
                f"is not a SigMF or WAV recording, so it is read as raw I/Q, which needs {', '.join(missing)} "
                "(e.g. --format ci16_le --rate 2.4MHz --centre 7.1MHz)", path=path)
    return open_recording(path, datatype=args.format, sample_rate_hz=rate, centre_hz=centre, i_channel=args.i_channel)


def read_recording(path, args, trace: str = "average"):
    """Open and estimate one recording; return (RecordingSpectrum, [InputFile])."""
    from ..core.result import InputFile
    from ..io.hashing import sha256_file
    from ..io.iq_spectrum import estimate_recording, reads_file_in_order

    rec = open_input_recording(path, args)
    kw = estimate_args(args, trace)
    in_order = reads_file_in_order(rec)
    hasher = hashlib.sha256() if in_order else None
    bar = _Progress(f"estimating {rec.path}")
    try:
        rs = estimate_recording(rec, progress=bar, hasher=hasher, **kw)
    finally:
        bar.close()
    files = []
    if rec.meta_path and rec.meta_path != rec.data_path:
        files.append(InputFile(rec.meta_path, sha256_file(rec.meta_path)))
    digest = hasher.hexdigest() if in_order else sha256_file(rec.data_path)
    files.append(InputFile(rec.data_path, digest))
    return rs, files


def _trace_correction(args):
    """The ``--correction`` table for traces, or None (recordings read it with their calibration)."""
    if not getattr(args, "correction", None):
        return None
    from ..io.correction import read_correction

    return read_correction(args.correction)


def _corrected(spectrum, table):
    """A trace with the correction table added to every reading, recorded as its calibration.

    The same table and interpolation as for a recording (linear in dB over
    log frequency, no extrapolation: a trace beyond the table is refused).
    """
    from dataclasses import replace

    from ..core.records import CalibrationRecord

    gain_db = table.gain_db(spectrum.freq_hz)
    cal = CalibrationRecord(level_scale="dBm", method="trace levels as read, plus the correction table",
                            correction_table=str(table.path), calibrated=True)
    return replace(spectrum, power_w=spectrum.power_w * 10.0 ** (gain_db / 10.0), calibration=cal)


#: options that act on IQ recordings only, with their defaults: refused when every input is a trace
RECORDING_ONLY = {"segment": None, "full_scale": None, "ref_tone": None, "rate": None, "centre": None,
                  "window": "blackman-harris", "overlap": "50%", "trace": "auto", "i_channel": "left", "workers": None,
                  "usable_fraction": None, "judge_artefacts": False}
#: options that describe trace files only: refused when every input is a recording (it says these itself)
TRACE_ONLY = {"freq_unit": None, "level_unit": None, "detector": None, "layout": None}


def refuse_unused_options(args, traces, recordings) -> None:
    """Refused, never ignored: a recording option when every input is a trace, and the converse.

    Only the options the command has are looked at; a value equal to the
    option's default counts as not given.
    """
    from ..errors import UnitError

    if traces and not recordings:
        unused, why = RECORDING_ONLY, f"applies to IQ recordings; every input is a trace ({traces[0]}), whose levels and RBW are its own"
    elif recordings and not traces:
        unused, why = TRACE_ONLY, f"describes trace files; every input is an IQ recording ({recordings[0]}), which states its own units and is estimated with an rms or max-hold trace"
    else:
        return
    for dest, default in unused.items():
        if getattr(args, dest, default) != default:
            raise UnitError(why, where="--" + dest.replace("_", "-"))


def read_input(paths, args, *, trace: str = "average") -> InputSet:
    """Read traces and recordings named on the command line (not yet stitched).

    Options that cannot act on these inputs are refused first (:func:`refuse_unused_options`).
    """
    from ..core.result import InputFile
    from ._common import read_traces, trace_inputs

    spectra, inputs, recs = [], [], []
    traces = [p for p in paths if not is_recording(p, args)]
    refuse_unused_options(args, traces, [p for p in paths if is_recording(p, args)])
    table = _trace_correction(args) if traces else None
    if table is not None:
        from ..io.hashing import sha256_file

        inputs.append(InputFile(table.path, sha256_file(table.path)))
    for p in paths:
        if is_recording(p, args):
            rs, files = read_recording(p, args, trace)
            spectra.append(rs.spectrum)
            inputs.extend(files)
            recs.append(rs)
        else:
            (s,) = read_traces([p], args)
            spectra.append(s if table is None else _corrected(s, table))
            inputs.extend(trace_inputs(s))
    if recs and traces:
        scales = {s.level_scale for s in spectra}
        if "dBFS" in scales:
            from ..errors import TraceError

            raise TraceError("an uncalibrated recording (dBFS) cannot be joined with traces in dBm; "
                             "calibrate it with --full-scale or --ref-tone", path=" + ".join(map(str, paths)))
    if getattr(args, "frame", None) and not recs:
        from ..errors import UnitError

        raise UnitError("the time-resolved mode applies to IQ recordings; none was given", where="--frame")
    return InputSet(spectra, inputs, recs)


def choose_trace(args, mask) -> str:
    """The trace of a recording to judge: ``--trace``, or for ``auto`` what the mask asks for."""
    choice = getattr(args, "trace", None) or "auto"
    if choice != "auto":
        return choice
    from ..checking.trace_choice import trace_for_mask

    return trace_for_mask(mask)


def worst_frame_check(result, got: InputSet, judge):
    """In the time-resolved mode (``--frame``), judge every frame and keep the worst.

    The judging itself is :func:`maskcheck.checking.frames.judge_frames`;
    this adapter only hands it the frames of the one recording given.
    """
    from ..checking.frames import judge_frames
    from ..errors import RecordingError

    if not getattr(got, "recordings", None) or not any(rs.frames for rs in got.recordings):
        return result
    if len(got.spectra) != 1:
        raise RecordingError("the time-resolved mode (--frame) takes one recording and no other input", where="--frame")
    (rs,) = got.recordings
    (fc, est) = rs.estimates[0]
    return judge_frames(
        result, rs.frame_spectrum, frames=rs.frames,
        frame_s=float(est.frame_averages[0] * est.plan.hop_samples / est.plan.sample_rate_hz),
        starts_s=est.frame_start_s, averages=est.frame_averages, judge=judge,
    )
