"""From an IQ recording to a calibrated :class:`~maskcheck.core.spectrum.Spectrum`.

This joins the readers of :mod:`maskcheck.io.iq` and the estimator of
:mod:`maskcheck.core.estimate`:

1. the captures are grouped by centre frequency; each group is one Welch
   estimate (segments never straddle a capture boundary);
2. each estimate becomes a span at radio frequency, and spans that overlap
   are cut where their overlap is halved (common practice, no published
   source);
3. the levels are put on an absolute scale when a calibration is given:

   * ``full_scale_w``: the power a full-scale complex tone reads (0 dBFS);
   * ``ref_tone``: a tone of known power in the recording; its measured
     power (integrated over four noise bandwidths either side, minus the
     floor there) fixes the scale;
   * a correction table (:mod:`maskcheck.io.correction`) adds a
     frequency-dependent gain on top (attenuators, cables, the receiver's
     response).

   Without a calibration the spectrum stays relative to full scale: its
   ``level_scale`` is ``"dBFS"``, and 0 dBFS is stored as 1 mW
   so that ``level_dbm`` reads dBFS; a check may then judge it only against
   relative limits.

4. each span keeps the middle ``usable_fraction`` of its sample rate (the
   band edges, where the receiver's anti-alias filter rolls off, are left out
   and recorded), and the receiver's DC line and IQ images are flagged
   (:mod:`maskcheck.core.artefacts`; the spectrum's ``artefacts`` record).

Everything used -- window, ENBW, segment length, overlap, averages, the
4.34/sqrt(K_eq) dB uncertainty (overlapping segments counted by their
correlation) and the calibration -- is recorded in the
spectrum's ``estimation``, ``calibration`` and ``recording`` records
(:mod:`maskcheck.core.records`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from ..core.artefacts import DEFAULT_USABLE_FRACTION, find_receiver_lines, join_artefacts, usable_band
from ..core.estimate import WelchAccumulator, WelchEstimate, plan_welch
from ..core.records import CalibrationRecord, ReceiverArtefacts, RecordingRecord
from ..core.spectrum import Spectrum
from ..core.units import w_to_dbm_fast
from ..errors import RecordingError, SpectrumError
from .iq import BLOCK_SAMPLES, Recording

__all__ = ["Calibration", "RecordingSpectrum", "estimate_recording", "read_recording", "reads_file_in_order", "TONE_HALF_WIDTH_ENBW", "TONE_MIN_SNR_DB"]

#: what 0 dBFS is stored as in an uncalibrated spectrum, W (so that level_dbm reads dBFS)
UNCALIBRATED_FULL_SCALE_W = 1e-3
#: the reference tone is integrated over this many noise bandwidths either side
TONE_HALF_WIDTH_ENBW = 4.0
#: how far a reference tone must stand above the floor in that band, dB
TONE_MIN_SNR_DB = 20.0


@dataclass(frozen=True)
class Calibration:
    """How levels are put on an absolute scale (all optional).

    Attributes
    ----------
    full_scale_w : float or None
        Power of a full-scale tone, W (``1e-3`` for 0 dBm).
    ref_tone_hz, ref_tone_w : float or None
        A tone in the recording at this frequency with this known power.
    correction : object or None
        A correction table with ``gain_db(freq_hz)`` and ``path``.
    """

    full_scale_w: float | None = None
    ref_tone_hz: float | None = None
    ref_tone_w: float | None = None
    correction: object = None

    @property
    def absolute(self) -> bool:
        return self.full_scale_w is not None or self.ref_tone_hz is not None


@dataclass(frozen=True, eq=False)
class RecordingSpectrum:
    """The result: the spectrum to check, and what it was made from.

    Attributes
    ----------
    spectrum : Spectrum
    estimates : tuple of (float, WelchEstimate)
        ``(centre_hz, estimate)`` per span.
    scale_w : float
        Watts per full-scale unit.
    calibration : CalibrationRecord
        As the spectrum carries it.
    correction : object or None
        The correction table applied on top (``gain_db(freq_hz)``), if any.
    usable_fraction : float
        The fraction of the sample rate kept about each centre.
    """

    spectrum: Spectrum
    estimates: tuple[tuple[float, WelchEstimate], ...]
    scale_w: float
    calibration: CalibrationRecord
    correction: object = None
    usable_fraction: float = DEFAULT_USABLE_FRACTION

    def frame_spectrum(self, i: int) -> Spectrum:
        """Frame ``i`` of a time-resolved single-span estimate, on the same scale."""
        (fc, est), = self.estimates
        meta = self.spectrum.metadata
        del meta["estimation"], meta["centre_hz"]  # set anew for the frame
        return self._finish(est.to_spectrum(fc, trace="frame", frame=i, **meta))

    @property
    def frames(self) -> int:
        if len(self.estimates) != 1 or self.estimates[0][1].frames_fs is None:
            return 0
        return int(self.estimates[0][1].frames_fs.shape[0])

    def _finish(self, s: Spectrum) -> Spectrum:
        gain = _gain(s.freq_hz, self.scale_w, self.correction)
        s = replace(s, power_w=s.power_w * gain)
        # a frame keeps the usable band of the whole recording and its flagged lines
        (fc, _), = self.estimates
        lo, hi = usable_band(fc, s.recording.sample_rate_hz, self.usable_fraction)
        return replace(_usable_part(s, lo, hi), artefacts=self.spectrum.artefacts)


def _gain(freq_hz, scale_w, correction):
    g = np.full(np.shape(freq_hz), float(scale_w))
    if correction is not None:
        g = g * 10.0 ** (np.asarray(correction.gain_db(freq_hz)) / 10.0)
    return g


def reads_file_in_order(rec: Recording) -> bool:
    """Whether :func:`estimate_recording` reads every byte of the data file once, in order."""
    if not rec.covers_whole_file or len(_group_captures(rec)) != 1:
        return False
    pos = 0
    for c in rec.captures:
        if c.sample_start != pos:
            return False
        pos += c.sample_count
    return pos == rec.num_samples


def _group_captures(rec: Recording):
    groups: dict[float, list] = {}
    for c in rec.captures:
        if c.sample_count > 0:
            groups.setdefault(c.centre_hz, []).append(c)
    return groups


def estimate_recording(
    rec: Recording,
    *,
    window: str = "blackman-harris",
    kaiser_beta: float | None = None,
    rbw_hz: float | None = None,
    segment_samples: int | None = None,
    overlap: float = 0.5,
    trace: str = "average",
    frame_s: float | None = None,
    calibration: Calibration = Calibration(),
    workers: int | None = None,
    usable_fraction: float = DEFAULT_USABLE_FRACTION,
    block_samples: int = BLOCK_SAMPLES,
    progress=None,
    hasher=None,
) -> RecordingSpectrum:
    """Estimate the spectrum of a recording and calibrate it.

    Parameters
    ----------
    rec : Recording
        From :func:`maskcheck.io.iq.open_recording`.
    window, kaiser_beta, rbw_hz, segment_samples, overlap
        See :func:`maskcheck.core.estimate.plan_welch`.
    trace : {"average", "max-hold"}
        The trace the spectrum holds: RMS average or max-hold (peak-detector
        emulation).
    frame_s : float, optional
        Keep per-frame averages of this duration (time-resolved mode; one
        centre frequency only).
    calibration : Calibration
    workers : int, optional
        Threads of the estimator.
    usable_fraction : float
        The fraction of the sample rate, about each centre frequency, whose
        readings are kept (0 < fraction <= 1; default
        :data:`~maskcheck.core.artefacts.DEFAULT_USABLE_FRACTION`): the band
        edges beyond it, where the receiver's anti-alias filter rolls off,
        are left out of the spectrum and recorded as such.
    block_samples : int
        Samples read at a time.
    progress : callable, optional
        ``progress(samples_done, samples_total)`` after every block.
    hasher : hashlib object, optional
        Updated with the sample bytes in the order read; used only when
        :func:`reads_file_in_order` says the read covers the data file from
        start to end (then its digest is the file's).

    Returns
    -------
    RecordingSpectrum
    """
    if not (math.isfinite(usable_fraction) and 0 < usable_fraction <= 1):
        raise RecordingError(f"usable_fraction={float(usable_fraction):g} must be > 0 and <= 1 (the part of the sample "
                             "rate kept about the centre)", path=rec.path, param="usable_fraction")
    for name in ("full_scale_w", "ref_tone_w"):
        v = getattr(calibration, name)
        if v is not None and not (math.isfinite(v) and v > 0):
            raise RecordingError(f"{name}={float(v):g} must be a finite power > 0 (W)", path=rec.path, param=name)
    if rbw_hz is not None and math.isfinite(rbw_hz) and rbw_hz > 0 and rec.sample_rate_hz / rbw_hz > rec.num_samples:
        # a segment is at least sample_rate / rbw samples (any window): compared with the record before the
        # window is built, so an RBW finer than the recording can give takes no memory
        raise RecordingError(f"rbw_hz={rbw_hz:g} needs segments of at least {rec.sample_rate_hz / rbw_hz:.6g} samples, "
                             f"more than the {rec.num_samples} of the recording (use a wider RBW or a longer recording)",
                             path=rec.path, param="rbw_hz")
    plan = plan_welch(rec.sample_rate_hz, window=window, kaiser_beta=kaiser_beta, rbw_hz=rbw_hz,
                      segment_samples=segment_samples, overlap=overlap)
    groups = _group_captures(rec)
    frame_segments = None
    if frame_s is not None:
        if not (math.isfinite(frame_s) and frame_s > 0):
            raise RecordingError(f"frame_s={frame_s:g} must be > 0 (the frame duration, s)", path=rec.path, param="frame_s")
        if len(groups) > 1:
            raise RecordingError(
                f"holds captures at {len(groups)} centre frequencies; the time-resolved mode (frame_s) needs one",
                path=rec.path, param="frame_s")
        frame_segments = max(1, round(frame_s * rec.sample_rate_hz / plan.hop_samples))
    total = sum(c.sample_count for cs in groups.values() for c in cs)
    done = 0
    estimates = []
    for fc, caps in sorted(groups.items()):
        acc = WelchAccumulator(plan, frame_segments=frame_segments, workers=workers, max_hold=trace == "max-hold")
        try:
            try:
                for c in caps:
                    acc.skip(c.sample_start - acc.position)
                    for blk in rec.blocks(c.sample_start, c.sample_count, block_samples=block_samples, hasher=hasher,
                                          prefetch=True):
                        acc.feed(blk)
                        done += blk.size
                        if progress is not None:
                            progress(done, total)
                est = acc.result()
            except SpectrumError as exc:
                raise RecordingError(exc.message, path=rec.path, where=exc.where, param=exc.param) from None
        finally:
            acc.release()
        estimates.append((fc, est))

    # calibration scale
    cal = CalibrationRecord(level_scale="dBFS", method="none (levels relative to full scale)")
    scale_w = UNCALIBRATED_FULL_SCALE_W
    if calibration.full_scale_w is not None and calibration.ref_tone_hz is not None:
        raise RecordingError("give full_scale_w or ref_tone_hz, not both", path=rec.path, param="ref_tone_hz")
    if calibration.full_scale_w is not None:
        scale_w = float(calibration.full_scale_w)
        cal = CalibrationRecord(level_scale="dBm", method="full scale", full_scale_dbm=w_to_dbm_fast(scale_w))
    correction = calibration.correction
    recording = RecordingRecord(
        kind=rec.kind,
        datatype=rec.datatype,
        sample_rate_hz=rec.sample_rate_hz,
        samples=rec.num_samples,
        duration_s=rec.duration_s,
        captures=len(rec.captures),
    )
    spans = []
    for fc, est in estimates:
        s = est.to_spectrum(fc, trace=trace, source=rec.path, recording=recording, notes=tuple(rec.notes))
        spans.append(s)
    if calibration.ref_tone_hz is not None:
        for fc, _ in estimates:
            lo, hi = usable_band(fc, rec.sample_rate_hz, usable_fraction)
            if lo <= calibration.ref_tone_hz <= hi:
                break
        else:
            raise RecordingError(
                f"the reference tone at {calibration.ref_tone_hz:g} Hz lies outside the usable "
                f"{100 * usable_fraction:g} % of the sample rate about the centre, where the receiver's anti-alias "
                "filter rolls off; expected a tone inside it (ref_tone_hz, usable_fraction)",
                path=rec.path, param="ref_tone_hz")
        tone = _measure_tone(rec, spans, estimates, calibration.ref_tone_hz, correction)
        scale_w = float(calibration.ref_tone_w) / tone
        cal = CalibrationRecord(
            level_scale="dBm",
            method="reference tone",
            tone_hz=calibration.ref_tone_hz,
            tone_dbm=w_to_dbm_fast(calibration.ref_tone_w),
            tone_measured_dbfs=10 * math.log10(tone),
            full_scale_dbm=w_to_dbm_fast(scale_w),
        )
    if correction is not None:
        cal = replace(cal, correction_table=str(getattr(correction, "path", "")))
    cal = replace(cal, calibrated=cal.level_scale == "dBm")
    finished = []
    for s, (fc, _) in zip(spans, estimates):
        gain = _gain(s.freq_hz, scale_w, correction)
        s = replace(s, power_w=s.power_w * gain, calibration=cal)
        finished.append(_with_receiver_artefacts(s, fc, rec.sample_rate_hz, usable_fraction, rec.path))
    spectrum = _join_spans(finished)
    return RecordingSpectrum(spectrum, tuple(estimates), scale_w, cal, correction, usable_fraction)


def _usable_part(s: Spectrum, lo: float, hi: float) -> Spectrum:
    """The points of one span inside its usable band ``[lo, hi]``, its outer cells ending there."""
    keep = s.between(lo, hi)
    return replace(keep, span_edges_hz=((max(lo, keep.cell_edges_hz[0][0]), min(hi, keep.cell_edges_hz[1][-1])),))


def _with_receiver_artefacts(s: Spectrum, centre_hz: float, sample_rate_hz: float, fraction: float, path) -> Spectrum:
    """One capture's span: its usable band kept, its band edges and the receiver's lines recorded."""
    lo, hi = usable_band(centre_hz, sample_rate_hz, fraction)
    if not (s.freq_hz[0] <= hi and s.freq_hz[-1] >= lo):
        raise RecordingError(f"no point of the capture at {centre_hz:g} Hz lies inside its usable band ({lo:g} to "
                             f"{hi:g} Hz)", path=path, param="usable_fraction")
    edges = tuple(e for e in ((s.start_hz, lo), (hi, s.stop_hz)) if e[1] > e[0])
    kept = _usable_part(s, lo, hi) if edges else s
    lines = tuple(find_receiver_lines(kept.freq_hz, kept.power_w, kept.rbw_hz, centre_hz))
    record = ReceiverArtefacts(usable_fraction=float(fraction), usable_hz=((lo, hi),), edges_hz=edges, lines=lines)
    return replace(kept, artefacts=record)


def _measure_tone(rec, spans, estimates, f_hz, correction) -> float:
    """Power of the reference tone in full-scale units (corrections applied)."""
    for s, (fc, est) in zip(spans, estimates):
        lo, hi = s.coverage_hz[0]
        half = TONE_HALF_WIDTH_ENBW * est.plan.enbw_hz
        if lo <= f_hz - half and f_hz + half <= hi:
            break
    else:
        raise RecordingError(
            f"the reference tone at {f_hz:g} Hz (with {TONE_HALF_WIDTH_ENBW:g} RBW either side) lies outside the "
            "recorded band; expected a tone inside it (ref_tone_hz)",
            path=rec.path,
            param="ref_tone_hz",
        )
    g = _gain(s.freq_hz, 1.0, correction)
    s = Spectrum(s.freq_hz, s.power_w * g, s.rbw_hz, s.enbw_hz, detector=s.detector)
    # the tone is measured on the average, whatever trace is asked for
    if s.detector != "rms":
        avg = est.to_spectrum(fc, trace="average")
        s = Spectrum(avg.freq_hz, avg.power_w * g, avg.rbw_hz, avg.enbw_hz, detector="rms")
    band = s.band_power_w(f_hz - half, f_hz + half)
    density = np.median(s.power_w / s.enbw_hz)  # floor: median density across the span
    floor = float(density * 2 * half)
    if not band > floor * 10 ** (TONE_MIN_SNR_DB / 10):
        raise RecordingError(
            f"the reference tone at {f_hz:g} Hz stands only {10 * math.log10(max(band, 1e-300) / floor):.1f} dB above "
            f"the floor; expected at least {TONE_MIN_SNR_DB:g} dB (is ref_tone_hz right?)",
            path=rec.path,
            param="ref_tone_hz",
        )
    return band - floor


def _join_spans(spectra: list[Spectrum]) -> Spectrum:
    """One Spectrum from spans at different centres; overlaps are cut in the middle."""
    spectra = sorted(spectra, key=lambda s: s.freq_hz[0])
    if len(spectra) == 1:
        return spectra[0]
    keep = [[float("-inf"), float("inf")] for _ in spectra]
    for i in range(len(spectra) - 1):
        a, b = spectra[i], spectra[i + 1]
        a_hi, b_lo = a.coverage_hz[-1][1], b.coverage_hz[0][0]
        if b_lo < a_hi:
            mid = (a_hi + b_lo) / 2.0
            keep[i][1] = mid
            keep[i + 1][0] = mid
    f, p, r, e, segs, edges = [], [], [], [], [], []
    n = 0
    for s, (lo, hi) in zip(spectra, keep):
        sel = (s.freq_hz >= lo) & (s.freq_hz < hi)
        if not sel.any():
            continue
        if n:
            segs.append(n)
        f.append(s.freq_hz[sel])
        p.append(s.power_w[sel])
        r.append(s.rbw_hz[sel])
        e.append(s.enbw_hz[sel])
        fs = s.freq_hz[sel]
        edges.append((lo if math.isfinite(lo) and lo <= fs[0] else None, hi if math.isfinite(hi) and hi >= fs[-1] else None))
        n += int(sel.sum())
    meta = spectra[0].metadata
    meta["centre_hz"] = None  # one centre per span: none for the whole
    meta["artefacts"] = join_artefacts([s.artefacts for s in spectra])
    return Spectrum(np.concatenate(f), np.concatenate(p), np.concatenate(r), np.concatenate(e),
                    detector=spectra[0].detector, segments=tuple(segs), span_edges_hz=tuple(edges), **meta)


#: the keywords of :func:`estimate_recording` that :func:`read_recording` passes on
_ESTIMATE_OPTIONS = frozenset({"window", "kaiser_beta", "rbw_hz", "segment_samples", "overlap", "trace", "workers"})


def read_recording(path, *, datatype: str | None = None, sample_rate_hz: float | None = None,
                   centre_hz: float | None = None, i_channel: str = "left", full_scale_w: float | None = None,
                   ref_tone_hz: float | None = None, ref_tone_w: float | None = None, correction=None,
                   **estimate) -> Spectrum:
    """Read an IQ recording and estimate its calibrated spectrum: one call, as ``maskcheck check REC`` does.

    Parameters
    ----------
    path : str or os.PathLike
        A SigMF recording (``.sigmf-meta``, ``.sigmf-data`` or a ``.sigmf``
        archive), a two-channel WAV file, or raw I/Q (then ``datatype``,
        ``sample_rate_hz`` and ``centre_hz`` are needed).
    datatype, sample_rate_hz, centre_hz, i_channel
        What a raw or WAV file does not say (:func:`maskcheck.io.iq.open_recording`).
    full_scale_w : float, optional
        Calibration: the power a full-scale tone reads, W (``1e-3`` for 0 dBm).
    ref_tone_hz, ref_tone_w : float, optional
        Calibration instead: a tone in the recording at this frequency (Hz)
        with this known power (W).
    correction : str, os.PathLike or CorrectionTable, optional
        A correction table (dB added per frequency) on top of the calibration.
    **estimate
        How to estimate (:func:`estimate_recording`): ``window`` (by its
        spelled name, ``"blackman-harris"`` by default, or the library
        alias), ``kaiser_beta``, ``rbw_hz``, ``segment_samples``,
        ``overlap``, ``trace``, ``workers``.

    Returns
    -------
    Spectrum
        Calibrated in dBm when ``full_scale_w`` or a reference tone is given,
        else relative to full scale (``level_scale == "dBFS"``).  Its
        ``source`` is ``path`` and ``sha256`` that file's SHA-256 (for a
        SigMF pair named by its metadata, the metadata file's: give
        :func:`maskcheck.check` ``inputs=`` to list the data file too).

    Raises
    ------
    RecordingError, CorrectionError
        With the file and the parameter named.
    """
    from .correction import read_correction
    from .hashing import sha256_file
    from .iq import open_recording

    rec = open_recording(path, datatype=datatype, sample_rate_hz=sample_rate_hz, centre_hz=centre_hz,
                         i_channel=i_channel)
    if correction is not None and not hasattr(correction, "gain_db"):
        correction = read_correction(correction)
    bad = sorted(set(estimate) - _ESTIMATE_OPTIONS)
    if bad:
        raise TypeError(f"read_recording() got unexpected keyword argument(s) {', '.join(map(repr, bad))}")
    rs = estimate_recording(rec, calibration=Calibration(full_scale_w, ref_tone_hz, ref_tone_w, correction), **estimate)
    return replace(rs.spectrum, source=str(path), sha256=sha256_file(path))
