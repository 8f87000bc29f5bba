"""``maskcheck spectrum``: the estimated spectrum of an IQ recording, as a trace file."""

from __future__ import annotations

from ._recording import add_recording_options
from ._spelling import add_option

__all__ = ["register", "run", "estimation_notes"]


def register(sub) -> None:
    s = sub.add_parser(
        "spectrum",
        help="estimate the spectrum of an IQ recording (and write it as a trace)",
        description="Estimate the power spectrum of an IQ recording (Welch, linear power averaging) and print or write it "
        "in the trace text format, with every estimation parameter in its header.",
    )
    s.add_argument("recording", metavar="RECORDING", help="SigMF, WAV, or raw I/Q file (raw needs --format, --rate, --centre)")
    add_option(s, "--rbw")
    add_recording_options(s, time_resolved=False)
    add_option(s, "--out", detail="a trace text file holding the spectrum")
    add_option(s, "--force", action="store_true")
    add_option(s, "--quiet", action="store_true")
    s.set_defaults(run=run)


def estimation_notes(spectrum, files) -> list[str]:
    """Header lines for the trace file: how the spectrum was made."""
    est = {} if spectrum.estimation is None else spectrum.estimation.to_dict()
    cal = {} if spectrum.calibration is None else spectrum.calibration.to_dict()
    lines = ["estimated by maskcheck from an IQ recording (pre-compliance aid, not a certified measurement)"]
    lines.append("estimation: " + " ".join(f"{k}={_fmt(v)}" for k, v in est.items()))
    lines.append("calibration: " + " ".join(f"{k}={_fmt(v)}" for k, v in cal.items()))
    if spectrum.recording is not None:
        lines.append("recording: " + " ".join(f"{k}={_fmt(v)}" for k, v in spectrum.recording.to_dict().items()))
    if spectrum.artefacts is not None:
        from ..report.tables import receiver_text

        lines.append("receiver: " + receiver_text(spectrum.artefacts).replace("; judged only as upper bounds", "")
                     + ("; a check of this trace cannot tell them from the transmitter's: check the recording itself"
                        if spectrum.artefacts.lines else ""))
    for f in files:
        lines.append(f"input: {f.path} sha256={f.sha256}")
    lines.extend(spectrum.notes)
    return lines


def _fmt(v) -> str:
    if isinstance(v, float):
        return f"{v:.10g}"
    return str(v).replace(" ", "_")


def run(args) -> int:
    from ..io.output import check_writable
    from ..io.trace_write import write_trace
    from ._common import console
    from ._recording import read_recording

    if args.out:
        check_writable(args.out, args.force)
    trace = "average" if args.trace == "auto" else args.trace
    rs, files = read_recording(args.recording, args, trace)
    spectrum = rs.spectrum
    scale = spectrum.level_scale
    if args.out:
        write_trace(args.out, spectrum, notes=estimation_notes(spectrum, files), force=args.force,
                    level_column="level_dbfs" if scale == "dBFS" else "level_dbm")
    if not args.quiet:
        est = spectrum.estimation
        cal = spectrum.calibration
        out = console()
        out.print(f"[bold]{args.recording}[/bold]: {len(spectrum)} points, {spectrum.start_hz:,.1f} to {spectrum.stop_hz:,.1f} Hz")
        if spectrum.artefacts is not None:
            from ..report.tables import receiver_text

            out.print(f"receiver: {receiver_text(spectrum.artefacts).replace('; judged only as upper bounds', '')}")
        out.print(
            f"RBW (noise bandwidth) {est.enbw_hz:.6g} Hz: {est.window} window, {est.segment_samples} samples per segment, "
            f"{100 * est.overlap_fraction:.0f} % overlap, {est.averages} segments; trace: {est.trace} "
            f"({est.detector}) of {est.trace_averages} segment(s), statistical uncertainty "
            f"+-{est.trace_uncertainty_db:.2f} dB (1 sigma)"
        )
        if scale == "dBFS":
            out.print("levels in dBFS: not calibrated (give --full-scale or --ref-tone for dBm)")
        else:
            out.print(f"levels in dBm: {cal.method}, full scale = {cal.full_scale_dbm:.2f} dBm")
        peak = int(spectrum.power_w.argmax())
        out.print(f"strongest point: {spectrum.level_dbm[peak]:.2f} {scale} at {spectrum.freq_hz[peak]:,.1f} Hz")
        if args.out:
            out.print(f"written: {args.out}")
    return 0
