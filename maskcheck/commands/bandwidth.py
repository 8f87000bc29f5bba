"""``maskcheck bandwidth``: occupied (beta/2) and x-dB bandwidth of one trace."""

from __future__ import annotations

from .._version import __version__
from ..errors import MaskcheckError
from ._common import add_trace_options, console, read_traces
from ._spelling import add_option

__all__ = ["register", "run"]


def register(sub) -> None:
    b = sub.add_parser("bandwidth", help="occupied and x-dB bandwidth of a trace")
    b.add_argument("trace", metavar="TRACE")
    b.add_argument("--beta", default="0.01", metavar="FRACTION", help="power fraction outside the occupied bandwidth (default 0.01: 99 %%)")
    add_option(b, "--xdb", default="26dB", detail="default 26dB")
    b.add_argument("--inner", action="store_true", help="x-dB edges nearest the peak instead of outermost")
    b.add_argument("--floor-threshold", metavar="DB", help="ignore points less than this above the noise floor (e.g. 6dB)")
    add_trace_options(b)
    add_option(b, "--json", detail="the figures")
    add_option(b, "--force", action="store_true")

    b.set_defaults(run=run)


def run(args) -> int:
    import json

    from ..core.bandwidth import occupied_bandwidth, sampling_bias, xdb_bandwidth
    from ..core.result import BandwidthFigure
    from ..core.units import parse_db
    from ..errors import SpectrumError, TraceError
    from ..io.output import check_writable, write_text

    if args.json and args.json != "-":
        check_writable(args.json, args.force)
    try:
        beta = float(args.beta)
    except ValueError:
        raise MaskcheckError(f"{args.beta!r} is not a fraction such as 0.01", where="--beta") from None
    if not 0 < beta < 1:
        raise MaskcheckError(f"{beta!r} must lie between 0 and 1 (0.01 for the 99 % bandwidth)", where="--beta")
    x_db = parse_db(args.xdb, what="--xdb")
    if not x_db > 0:
        raise MaskcheckError(f"{args.xdb!r}: x must be > 0 dB (the x-dB bandwidth is x dB below the peak)", where="--xdb")
    floor = parse_db(args.floor_threshold, what="--floor-threshold") if args.floor_threshold else None
    (spectrum,) = read_traces([args.trace], args)
    figures, notes = [], []
    try:
        obw = occupied_bandwidth(spectrum, beta, floor_threshold_db=floor)
        # too few points per RBW bias the edges: say by how much (issue 11, item 15)
        bias = sampling_bias(spectrum, obw)
        obw_notes = list(obw.warnings) + ([] if bias is None else [bias.message(beta)])
        figures.append(BandwidthFigure("occupied", obw.width_hz, obw.lower_hz, obw.upper_hz, beta, obw_notes))
    except SpectrumError as exc:
        raise TraceError(exc.message, path=args.trace, param=exc.param) from None
    try:
        xb = xdb_bandwidth(spectrum, x_db, mode="inner" if args.inner else "outer")
        figures.append(
            BandwidthFigure("x-dB", xb.width_hz, xb.lower_hz, xb.upper_hz, x_db, [f"{xb.mode} crossings, {x_db:g} dB below the peak of {xb.peak_dbm:.1f} dBm"])
        )
    except SpectrumError as exc:
        notes.append(f"{x_db:g} dB bandwidth not measured: {exc.message}")
    if args.json:
        payload = {
            # what the trace was read as: the RBW and the detector (the file's or the options'), and the notes
            "trace": {"path": args.trace, "sha256": spectrum.sha256, "rbw_hz_min": float(spectrum.rbw_hz.min()),
                      "rbw_hz_max": float(spectrum.rbw_hz.max()), "detector": spectrum.detector,
                      **({"reading": spectrum.trace_file.reading} if spectrum.trace_file.inferred else {}),
                      "notes": list(spectrum.notes),
                      **({"layout": {"path": spectrum.trace_file.layout, "sha256": spectrum.trace_file.layout_sha256}}
                         if spectrum.trace_file.layout else {})},
            "bandwidths": [f.to_dict() for f in figures],
            "warnings": notes,
            "sampling": None if bias is None else bias.to_dict(),
            "tool": {"name": "maskcheck", "version": __version__},
        }
        write_text(args.json, json.dumps(payload, indent=2, allow_nan=False) + "\n", force=args.force)
    if args.json != "-":
        from ..report.terminal import render_bandwidth

        con = console()
        render_bandwidth(figures, con, title=f"Bandwidths of {args.trace}")
        for n in notes:
            con.print(f"note: {n}")
    return 0


