"""``maskcheck demo``: an invented bench scenario, checked end to end.

EVERYTHING HERE IS INVENTED for demonstration: the station, the bench, the
transmitter and every number.  It is no measurement of any real equipment.

The scenario: an imaginary home-built 40 m single-sideband transmitter
("bench unit 7", invented) is keyed with the two-tone test of 47 CFR
2.1049(c)(2) (400 Hz + 1800 Hz, upper sideband) at 100 W PEP, i.e. 50 W mean.
Its output is swept through an imaginary 40 dB attenuator in four spans --
9-150 kHz at 1 kHz RBW, 150 kHz-30 MHz at 10 kHz, 30-75 MHz at 100 kHz, and a
zoom of +-50 kHz around the carrier at 100 Hz (so the overview's wide
filter never sits on the carrier's skirt) -- and the levels are already corrected to
the transmitter output.  The trace files are made by a small model of a swept
analyser (a Gaussian resolution filter over a list of lines plus a noise
floor), written in the maskcheck trace format, read back, stitched and judged
against 47 CFR 97.307(d) (amateur, below 30 MHz).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from .core.spectrum import Spectrum

__all__ = ["demo_spans", "run_demo", "DEMO_CARRIER_HZ", "DEMO_MEAN_POWER_W", "DEMO_PEP_W"]

DEMO_CARRIER_HZ = 7.1e6
DEMO_PEP_W = 100.0
DEMO_MEAN_POWER_W = 50.0  # two equal tones: PEP = 2 x mean (methods sheet 3.1)
DEMO_MASK = "us-amateur-hf-2003"

#: noise bandwidth of a Gaussian filter per Hz of -3 dB bandwidth (methods sheet 1.4)
GAUSS_ENBW = math.sqrt(math.pi / (4 * math.log(2)))

#: invented analyser floor referred to the transmitter output, dBm/Hz
_FLOOR_DBM_PER_HZ = -112.0


def _lines() -> list[tuple[float, float]]:
    """(frequency_hz, power_w) of every invented discrete emission."""
    fc = DEMO_CARRIER_HZ
    f1, f2 = fc + 400.0, fc + 1800.0
    tone_w = DEMO_MEAN_POWER_W / 2.0
    d = f2 - f1
    lines = [(f1, tone_w), (f2, tone_w)]

    def rel(db):
        return tone_w * 10.0 ** (db / 10.0)

    # odd-order products of the (invented) linear amplifier, dB below one tone
    for k, db in ((1, -33.0), (2, -43.0), (3, -51.0)):
        lines += [(f1 - k * d, rel(db)), (f2 + k * d, rel(db))]
    lines += [(fc, rel(-52.0))]  # carrier leak of the balanced modulator
    lines += [(fc - 400.0, rel(-56.0)), (fc - 1800.0, rel(-56.0))]  # opposite sideband
    # harmonics after the (invented) low-pass filter, total dB below the mean power
    mean_w = DEMO_MEAN_POWER_W
    for n, db in ((2, -47.5), (3, -54.0), (4, -63.0), (5, -61.0), (6, -70.0), (7, -68.0), (8, -75.0), (9, -74.0), (10, -80.0)):
        total = mean_w * 10.0 ** (db / 10.0)
        lines += [(n * f1, total / 2.0), (n * f2, total / 2.0)]
    # a leak of the (invented) 5.1 MHz VFO and of the 12.2 MHz mixer image
    lines += [(5.1e6, mean_w * 10 ** (-66.0 / 10)), (12.2e6, mean_w * 10 ** (-58.0 / 10))]
    return lines


def _sweep(start_hz: float, stop_hz: float, rbw_hz: float, step_hz: float, lines, label: str) -> Spectrum:
    """A model swept-analyser trace: Gaussian RBW over the lines, plus the floor."""
    f = np.arange(start_hz, stop_hz + step_hz / 2, step_hz)
    enbw = GAUSS_ENBW * rbw_hz
    p = np.full(f.size, 10 ** ((_FLOOR_DBM_PER_HZ - 30) / 10) * enbw)
    # invented transmitter noise: -70 dBm/Hz at the carrier, falling as 1/offset^2
    p += 10 ** ((-70.0 - 30) / 10) * enbw * (5e3 / (np.abs(f - DEMO_CARRIER_HZ) + 5e3)) ** 2
    for fl, pw in lines:
        if start_hz - 5 * rbw_hz <= fl <= stop_hz + 5 * rbw_hz:
            p += pw * np.exp(-4.0 * math.log(2) * (f - fl) ** 2 / rbw_hz**2)
    return Spectrum(f, p, rbw_hz, enbw_hz=enbw, detector="rms", reference={"source": label})


def demo_spans() -> list[tuple[str, Spectrum]]:
    """The four invented spans: (file name, Spectrum)."""
    lines = _lines()
    fc = DEMO_CARRIER_HZ
    return [
        ("span1-9k-150k.txt", _sweep(9e3, 150e3, 1e3, 500.0, lines, "span1")),
        ("span2-150k-30M.txt", _sweep(150e3, 30e6, 10e3, 5e3, lines, "span2")),
        ("span3-30M-75M.txt", _sweep(30e6, 75e6, 100e3, 50e3, lines, "span3")),
        ("span4-zoom-7.1M.txt", _sweep(fc - 50e3, fc + 50e3, 100.0, 50.0, lines, "span4")),
    ]


def run_demo(out_dir, *, force: bool = False, console=None) -> int:
    """Write the invented traces into ``out_dir``, check them, write JSON and PDF.

    Returns the exit code of the check (0 pass, 1 fail, 3 marginal/incomplete).
    """
    from .checking import check
    from .core.result import InputFile
    from .core.spectrum import stitch
    from .core.station import Station
    from .io.output import check_writable
    from .io.trace_text import read_trace
    from .io.trace_write import write_trace
    from .masks.library import load_mask
    from .report.pdf import write_report
    from .report.tables import write_json
    from .report.terminal import render_check

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    spans = demo_spans()
    targets = [out / name for name, _ in spans] + [out / "demo-result.json", out / "demo-report.pdf"]
    for t in targets:
        check_writable(t, force)
    notes = [
        "INVENTED DEMO DATA - not a measurement of any real equipment.",
        "Scenario: imaginary home-built 40 m SSB transmitter 'bench unit 7', two-tone test 400 + 1800 Hz, 100 W PEP.",
        "Levels corrected to the transmitter output (imaginary 40 dB attenuator).",
    ]
    paths = []
    for (name, spec), path in zip(spans, targets):
        write_trace(path, spec, notes=notes, force=force)
        paths.append(path)
    spectra = [read_trace(p) for p in paths]
    spectrum = stitch(spectra)
    station = Station(
        carrier_hz=DEMO_CARRIER_HZ,
        power_w=DEMO_MEAN_POWER_W,
        pep_w=DEMO_PEP_W,
        designator="2K70J3E",
        name="bench unit 7 (invented demo station)",
        notes=("invented scenario for the demo",),
    )
    mask = load_mask(DEMO_MASK)
    inputs = [InputFile(str(s.reference["source"]), str(s.reference["sha256"])) for s in spectra]
    result = check(spectrum, mask, station, guard_db=1.5, inputs=inputs)
    if console is not None:
        console.print("[bold]maskcheck demo[/bold]: an INVENTED bench scenario (no real equipment was measured)")
        render_check(result, console)
    write_json(result, targets[-2], force=force)
    write_report(result, targets[-1], force=force)
    if console is not None:
        console.print(f"written to {out}/: {', '.join(t.name for t in targets)}")
    return result.exit_code
