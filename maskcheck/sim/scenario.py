"""Scenario files: a transmitter chain described in TOML, validated, and run.

A scenario (maskcheck's own format, ``scenario_version = 1``) names one
chain, source -> modulator -> IF filter -> amplifier -> output filter, the
power at the antenna port and how the result is analysed::

    scenario_version = 1
    name = "40 m SSB exciter, filter method (invented)"

    [signal]
    carrier = "7.1 MHz"
    sample_rate = "48 kHz"
    duration = "2 s"
    seed = 1

    [source]
    kind = "two-tone"
    f1 = "400 Hz"
    f2 = "1800 Hz"

    [modulator]
    kind = "ssb-filter"
    sideband = "upper"

    [amplifier]
    model = "rapp"
    smoothness = 2.0
    backoff = "3 dB"
    harmonics = [1.0, 0.03, 0.01]

    [output_filter]
    kind = "cheby1"
    order = 7
    cutoff = "8 MHz"
    ripple = "0.1 dB"

    [antenna]
    power = "100 W"
    power_kind = "pep"

    [analysis]
    rbw = "10 Hz"

Quantities are strings with a unit (``"7.1 MHz"``, ``"100 W"``, ``"50 dBm"``,
``"2 s"``, ``"3 dB"``) or bare numbers in the SI unit (Hz, W, s, dB).  An
unknown key, a value of the wrong kind or out of range, and a chain that
cannot work (a filter edge above half the sample rate, harmonics that would
overlap, a tone the sample rate cannot hold) are all reported at once, each
with its key path, as one :class:`~maskcheck.errors.ScenarioError`.

References
----------
.. [1] TOML v1.0.0 (toml.io), read with :mod:`tomllib`.
"""

from __future__ import annotations

import hashlib
import math
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from pydantic import ValidationError

from ..core.estimate import WelchPlan, plan_welch
from .._toml import decode_text, key_path, loads
from ..errors import MaskcheckError, ScenarioError
from . import modulate, sources
from .amplifier import Polynomial, Rapp, Saleh, amplify, drive
from .baseband import Baseband, sample_count
from .filters import IfFilter, OutputFilter
from .scenario_models import (_AUDIO, _KEYING, MAX_RECORD_SAMPLES, MAX_ZONE_SAMPLES, MIN_KEYING_UNIT_SAMPLES,
                              SCENARIO_VERSION, IfFilterTable, Scenario)
from .wideband import WidebandResult, wideband_spectrum

__all__ = [
    "SCENARIO_VERSION",
    "Scenario",
    "Simulation",
    "load_scenario",
    "parse_scenario",
    "read_scenario_text",
    "run_scenario",
]

# the models of the file are in scenario_models.py; this module loads, checks and runs them


# ------------------------------------------------------------------ loading




def _validation_problems(exc: ValidationError) -> list[str]:
    problems = []
    for e in exc.errors(include_url=False):
        loc = tuple(e.get("loc", ()))
        # a tagged union puts the member's tag into the path (source.tone.frequency): drop it
        if len(loc) >= 2 and loc[0] in ("source", "modulator"):
            loc = loc[:1] + loc[2:]
        kind = e.get("type")
        if kind == "extra_forbidden":
            msg = f"unknown key {loc[-1]!r}"
        elif kind == "missing":
            msg = "required key is missing"
        elif kind == "union_tag_invalid":
            ctx = e.get("ctx", {})
            loc = loc + ("kind",)
            msg = f"{ctx.get('tag')!r} is not one of {ctx.get('expected_tags')}"
        elif kind == "union_tag_not_found":
            loc = loc + ("kind",)
            msg = "required key is missing"
        else:
            msg = e.get("msg", "")
            msg = msg.replace("Input should be", "expected a value").replace("expected a value a valid", "expected a valid")
            if kind != "scenario_value" and "input" in e and not isinstance(e["input"], (dict, list)):
                msg = f"{msg} (found {e['input']!r})"
        problems.append(f"{key_path(loc)}: {msg}")
    return problems


def _raise(problems: list[str], path) -> None:
    if len(problems) == 1:
        raise ScenarioError(problems[0], path=path, problems=problems)
    raise ScenarioError(f"{len(problems)} problems: " + "; ".join(problems), path=path, problems=problems)


def parse_scenario(text: str, *, path=None) -> "Scenario":
    """Validate scenario TOML ``text``; every problem is reported at once (:class:`ScenarioError`)."""
    raw = loads(text, lambda message, where: ScenarioError(message, path=path, where=where))
    try:
        sc = Scenario.model_validate(raw)
    except ValidationError as exc:
        _raise(_validation_problems(exc), path)
    problems = _chain_problems(sc)
    if problems:
        _raise(problems, path)
    return sc


def read_scenario_text(path) -> tuple[str, str]:
    """A scenario file's text and the SHA-256 of its bytes (not yet validated)."""
    p = Path(path)
    try:
        data = p.read_bytes()
    except OSError as exc:
        raise ScenarioError(f"cannot read the scenario file ({exc.strerror or exc})", path=path) from None
    text = decode_text(data, "scenario files", lambda message, where: ScenarioError(message, path=path, where=where))
    return text, hashlib.sha256(data).hexdigest()


def load_scenario(path) -> tuple["Scenario", str]:
    """Read and validate a scenario file; returns the scenario and the SHA-256 of its bytes."""
    text, sha = read_scenario_text(path)
    return parse_scenario(text, path=path), sha


# ------------------------------------------------------------------ the chain as objects

def _if_filter(sc: Scenario) -> IfFilter:
    t = sc.if_filter or IfFilterTable()
    rp, rs = t.ripple, t.stopband
    if sc.if_filter is None or (t.kind == "elliptic" and rp is None and rs is None):
        rp, rs = (0.5, 70.0) if t.kind == "elliptic" else (rp, rs)
    if t.kind == "chebyshev-1" and rp is None:
        rp = 0.5
    return IfFilter(t.low, t.high, t.kind, t.order, ripple_db=rp, stopband_db=rs)


def _output_filter(sc: Scenario) -> OutputFilter | None:
    t = sc.output_filter
    if t is None:
        return None
    return OutputFilter(t.cutoff, t.kind, t.order, ripple_db=t.ripple, stopband_db=t.stopband)


def _amplifier(sc: Scenario):
    """(model, harmonics polynomial or None)."""
    t = sc.amplifier
    if t is None or t.model == "linear":
        return Polynomial((1.0,)), None
    harm = None if t.harmonics is None else Polynomial(tuple(t.harmonics))
    if t.model == "polynomial":
        return Polynomial(tuple(t.coefficients or ())), None
    if t.model == "rapp":
        return Rapp(t.gain, t.saturation_v, t.smoothness), harm
    return Saleh(t.alpha_a, t.beta_a, t.alpha_phi, t.beta_phi), harm


# parameter names of the library's messages -> the scenario's keys
_PARAM_KEYS = {
    "low_hz": "low", "high_hz": "high", "ripple_db": "ripple", "stopband_db": "stopband", "order": "order",
    "cutoff_hz": "cutoff", "kind": "kind", "coefficients": "coefficients", "freq_hz": "frequency",
    "f1_hz": "f1", "f2_hz": "f2", "rise_time_s": "rise_time", "text": "text", "duration_s": "duration",
    "deviation_hz": "deviation", "symbol_rate_hz": "rate", "authorised_bandwidth_hz": "test_pair",
}


def _where(section: str, exc: Exception) -> str:
    msg = str(exc)
    m = re.match(r"^([a-z_0-9]+)(?:\[\d+\])?=", msg)
    key = _PARAM_KEYS.get(m.group(1)) if m else None
    if key is None:  # "a cheby2 filter needs stopband_db ...": the first parameter named anywhere
        names = [n for n in re.findall(r"[a-z_0-9]+", msg) if n in _PARAM_KEYS and "_" in n]
        key = _PARAM_KEYS[names[0]] if names else None
    return f"{section}.{key}: {msg}" if key else f"{section}: {msg}"


def _size_problems(sc: Scenario) -> list[str]:
    """The memory a scenario asks for, from its numbers alone (the bounds of :mod:`.scenario_models`)."""
    out = []
    fs, d = sc.signal.sample_rate, sc.signal.duration
    over = sc.amplifier.oversample if sc.amplifier is not None else 1
    n = d * fs * over
    zones = n * (sc.analysis.max_harmonic + 1)
    if n > MAX_RECORD_SAMPLES:
        out.append(f"signal.duration: {d:g} s at {fs:g} samples/s" + (f" (x{over} oversampling)" if over > 1 else "")
                   + f" is {n:g} samples, more than the {MAX_RECORD_SAMPLES} one simulated record may hold "
                   "(expected a shorter signal.duration or a lower signal.sample_rate)")
    elif zones > MAX_ZONE_SAMPLES:
        out.append(f"analysis.max_harmonic: {sc.analysis.max_harmonic} harmonic zones of {n:g} samples each are "
                   f"{zones:g} samples, more than the {MAX_ZONE_SAMPLES} a simulation may hold "
                   "(expected fewer harmonics or a shorter signal.duration)")
    src = sc.source
    unit_s = None
    if src.kind == "morse":
        unit_s = sources.morse_unit_s(src.wpm, src.convention)
    elif src.kind == "dots":
        unit_s = 1.0 / (2.0 * src.dots_per_s)  # a dot and its space share one period
    if unit_s is not None and unit_s * fs < MIN_KEYING_UNIT_SAMPLES:
        key = "source.wpm" if src.kind == "morse" else "source.dots_per_s"
        out.append(f"{key}: a keying unit of {unit_s:g} s lasts {unit_s * fs:g} samples at {fs:g} samples/s "
                   f"(expected at least {MIN_KEYING_UNIT_SAMPLES}: slower keying or a higher signal.sample_rate)")
    if src.kind == "symbols" and src.rate > fs:
        out.append(f"source.rate: {src.rate:g} symbols/s is above the sample rate ({fs:g} samples/s)")
    # the Welch segment is at least sample_rate / rbw samples (every window's ENBW is at least one bin):
    # compared with the record before any window is built
    seg = fs * over / sc.analysis.rbw
    if seg > n:
        out.append(f"analysis.rbw: {sc.analysis.rbw:g} Hz needs segments of at least {seg:g} samples, longer than the "
                   f"record ({n:g} samples; expected a wider RBW or a longer signal.duration)")
    return out


def _chain_problems(sc: Scenario) -> list[str]:
    """Everything the schema alone cannot see: sample rate, filter edges, zone overlap, source/modulator fit."""
    out = _size_problems(sc)
    if out:  # nothing below may run on a scenario too big to hold: some of it makes arrays
        return out
    fs = sc.signal.sample_rate
    nyq = fs / 2
    try:
        sample_count(sc.signal.duration, fs)
    except ValueError as exc:
        out.append(f"signal.duration: {exc}")
    src, mod = sc.source, sc.modulator
    # the source must suit the modulator
    if mod.kind == "cw" and src.kind not in _KEYING:
        out.append(f"modulator.kind: 'cw' needs a keying source (source.kind 'morse' or 'dots'), found {src.kind!r}")
    elif mod.kind in ("fsk", "psk", "qam") and src.kind != "symbols":
        out.append(f"modulator.kind: {mod.kind!r} needs source.kind 'symbols', found {src.kind!r}")
    elif mod.kind not in ("cw", "fsk", "psk", "qam") and src.kind not in _AUDIO:
        out.append(f"modulator.kind: {mod.kind!r} needs an audio source (source.kind one of {', '.join(_AUDIO)}), found {src.kind!r}")
    # audio frequencies the sample rate can hold
    freqs = []
    if src.kind == "tone":
        freqs = [("source.frequency", src.frequency)]
    elif src.kind == "two-tone":
        if src.test_pair is not None:
            if src.f1 is not None or src.f2 is not None:
                out.append("source.test_pair: give test_pair or f1 and f2, not both")
            elif src.test_pair not in sources.SSB_TEST_PAIRS_HZ:
                out.append(f"source.test_pair: {src.test_pair:g} Hz has no 47 CFR 2.1049(c)(2) pair (expected "
                           f"{', '.join(f'{k:g} Hz' for k in sources.SSB_TEST_PAIRS_HZ)})")
        elif src.f1 is None or src.f2 is None:
            out.append("source: a two-tone source needs f1 and f2 (or test_pair)")
        else:
            freqs = [("source.f1", src.f1), ("source.f2", src.f2)]
            if src.f1 == src.f2:
                out.append(f"source.f2: the two tones are both at {src.f1:g} Hz (expected two different tones)")
    elif src.kind == "multitone":
        freqs = [(f"source.frequencies[{i}]", f) for i, f in enumerate(src.frequencies)]
        if src.amplitudes is not None and len(src.amplitudes) != len(src.frequencies):
            out.append(f"source.amplitudes: {len(src.amplitudes)} amplitudes for {len(src.frequencies)} frequencies (expected as many)")
    elif src.kind == "speech":
        freqs = [("source.high", src.high)]
        if not src.low < src.high:
            out.append(f"source.low: {src.low:g} Hz is not below source.high ({src.high:g} Hz)")
    elif src.kind == "symbols":
        sps = fs / src.rate
        if abs(sps - round(sps)) > 1e-9 * sps or round(sps) < 2:
            out.append(f"source.rate: signal.sample_rate / rate = {sps:g} (expected a whole number of samples per symbol, >= 2)")
        if mod.kind == "qam" and (round(math.sqrt(src.order)) ** 2 != src.order or round(math.sqrt(src.order)) % 2):
            out.append(f"source.order: {src.order} is not a square QAM order (expected 4, 16, 64, ...)")
    for key, f in freqs:
        if f >= nyq:
            out.append(f"{key}: {f:g} Hz is not below half the sample rate ({nyq:g} Hz)")
    if src.kind in _KEYING:
        try:
            plan = (sources.morse_keying(src.text, 20.0 if src.kind != "morse" else src.wpm, convention=src.convention)
                    if src.kind == "morse" else sources.dot_train(src.dots_per_s, 1.0 / src.dots_per_s))
            edge = sources.rise_time_per_edge(src.rise_time)
            if edge > plan.unit_s:
                out.append(f"source.rise_time: {src.rise_time * 1e3:g} ms makes edges longer than one Morse unit "
                           f"({plan.unit_s * 1e3:g} ms)")
        except ValueError as exc:
            out.append(_where("source", exc))
    # modulator details
    if mod.kind == "fm" and mod.deviation >= nyq:
        out.append(f"modulator.deviation: {mod.deviation:g} Hz is not below half the sample rate ({nyq:g} Hz)")
    if mod.kind == "ssb-filter":
        try:
            _if_filter(sc).sos(fs)
        except ValueError as exc:
            out.append(_where("if_filter", exc))
    elif sc.if_filter is not None:
        out.append(f"if_filter: given, but modulator.kind is {mod.kind!r} (an IF filter belongs to 'ssb-filter')")
    # amplifier
    a = sc.amplifier
    model = harm = None
    if a is not None:
        if a.model == "polynomial" and not a.coefficients:
            out.append("amplifier.coefficients: a polynomial amplifier needs coefficients [a1, a2, ...]")
        if a.model != "polynomial" and a.coefficients is not None:
            out.append(f"amplifier.coefficients: given for a {a.model} amplifier (only 'polynomial' takes them)")
        if a.model in ("polynomial", "linear") and a.harmonics is not None:
            out.append(f"amplifier.harmonics: given for a {a.model} amplifier (only 'rapp' and 'saleh' take them; "
                       "a polynomial makes its own harmonics)")
        try:
            model, harm = _amplifier(sc)
        except ValueError as exc:
            out.append(_where("amplifier", exc))
        if a.model == "polynomial" and model is not None:
            try:
                model.input_reference_v
            except ValueError as exc:
                out.append(f"amplifier.coefficients: {exc} (back-off is counted from the 1 dB compression point)")
    makes_harmonics = model is not None and ((isinstance(model, Polynomial) and model.order >= 2) or harm is not None)
    zone_fs = fs * (a.oversample if a is not None else 1)
    if makes_harmonics and sc.signal.carrier < zone_fs:
        out.append(f"signal.carrier: {sc.signal.carrier:g} Hz is below the zone sample rate {zone_fs:g} Hz, so the "
                   "harmonic zones would overlap (expected a carrier of at least the sample rate)")
    if sc.signal.carrier - zone_fs / 2 <= sc.analysis.start:
        out.append(f"analysis.start: {sc.analysis.start:g} Hz is not below the fundamental zone "
                   f"({sc.signal.carrier - zone_fs / 2:g} Hz and up)")
    try:
        _output_filter(sc)
    except ValueError as exc:
        out.append(_where("output_filter", exc))
    if sc.analysis.rbw >= 1e3:
        out.append(f"analysis.rbw: {sc.analysis.rbw:g} Hz is not below 1 kHz, the finest cells of the floor between "
                   "the zones (expected an RBW under 1 kHz)")
    # the estimate must fit the record
    try:
        plan = plan_welch(zone_fs, window=sc.analysis.window, rbw_hz=sc.analysis.rbw, overlap=sc.analysis.overlap)
        n = sc.signal.duration * zone_fs
        if plan.segment_samples > n:
            out.append(f"analysis.rbw: {sc.analysis.rbw:g} Hz needs segments of {plan.segment_samples} samples, longer "
                       f"than the record ({n:g} samples; expected a wider RBW or a longer signal.duration)")
    except MaskcheckError as exc:
        out.append(f"analysis.rbw: {exc.message}")
    return out


# ------------------------------------------------------------------ running

@dataclass(frozen=True)
class Simulation:
    """A scenario run: its antenna-port signal and what a check needs to know.

    Attributes
    ----------
    scenario : Scenario
    wideband : WidebandResult
        The wideband spectrum, the fundamental (zone 1) at the antenna port, zone powers.
    plan : WelchPlan
        The estimation parameters used for every zone.
    mean_power_w, pep_w : float
        Mean power and PEP of the fundamental at the antenna port, W.
    notes : tuple of str
        What each stage did.
    """

    scenario: Scenario
    wideband: WidebandResult
    plan: WelchPlan
    mean_power_w: float
    pep_w: float
    notes: tuple[str, ...]

    @property
    def carrier_hz(self) -> float:
        return float(self.scenario.signal.carrier)

    @property
    def fundamental(self) -> Baseband:
        return self.wideband.fundamental


def _source(sc: Scenario, rng: np.random.Generator):
    s, fs, d = sc.source, sc.signal.sample_rate, sc.signal.duration
    if s.kind == "tone":
        return sources.tone(s.frequency, d, fs, amplitude=s.amplitude)
    if s.kind == "two-tone":
        f1, f2 = sources.ssb_test_pair(s.test_pair) if s.test_pair is not None else (s.f1, s.f2)
        return sources.two_tone(f1, f2, d, fs)
    if s.kind == "multitone":
        x = sources.multitone(s.frequencies, d, fs, amplitudes=s.amplitudes)
        peak = float(np.max(np.abs(x)))
        return x / peak if peak > 0 else x
    if s.kind == "speech":
        return sources.speech_noise(d, fs, rng, low_hz=s.low, high_hz=s.high, knee_hz=s.knee,
                                    tilt_db_per_octave=s.tilt_db_per_octave)
    if s.kind == "morse":
        plan = sources.morse_keying(s.text, s.wpm, convention=s.convention, repeat_to_s=d)
    elif s.kind == "dots":
        plan = sources.dot_train(s.dots_per_s, d)
    else:
        return sources.random_symbols(int(round(d * s.rate)), s.order, rng)
    env = sources.keying_envelope(plan, fs, rise_time_s=s.rise_time)
    n = sample_count(d, fs)
    if env.size < n:  # the pattern is repeated whole; key up for the rest of the record
        env = np.concatenate((env, np.zeros(n - env.size)))
    return env[:n]


def _modulate(sc: Scenario, signal) -> Baseband:
    m, fs, fc = sc.modulator, sc.signal.sample_rate, sc.signal.carrier
    if m.kind == "am":
        return modulate.am(signal, fs, fc, index=m.index, overmodulation=m.overmodulation)
    if m.kind == "dsb-sc":
        return modulate.dsb_sc(signal, fs, fc, imbalance=m.imbalance)
    if m.kind == "ssb-phasing":
        leak = 0.0 if m.carrier_leak is None else 10 ** (m.carrier_leak / 20)
        return modulate.ssb_phasing(signal, fs, fc, sideband=m.sideband, gain_ratio=10 ** (m.gain_error / 20),
                                    phase_error_deg=m.phase_error_deg, carrier_leak=leak)
    if m.kind == "ssb-filter":
        return modulate.ssb_filter(signal, fs, fc, sideband=m.sideband, if_filter=_if_filter(sc), imbalance=m.imbalance)
    if m.kind == "fm":
        return modulate.fm(signal, fs, fc, deviation_hz=m.deviation, pre_emphasis_s=m.pre_emphasis)
    if m.kind == "pm":
        return modulate.pm(signal, fs, fc, deviation_rad=m.deviation_rad, pre_emphasis_s=m.pre_emphasis)
    if m.kind == "cw":
        return modulate.cw(signal, fs, fc)
    src = sc.source
    if m.kind == "fsk":
        return modulate.fsk(signal, src.order, src.rate, fs, fc, deviation_hz=m.deviation, pulse=m.pulse, alpha=m.roll_off)
    pts = modulate.psk_constellation(src.order) if m.kind == "psk" else modulate.qam_constellation(src.order)
    return modulate.linear(signal, pts, src.rate, fs, fc, pulse=m.pulse, alpha=m.roll_off)


def run_scenario(sc: Scenario, *, path=None, workers: int | None = None) -> Simulation:
    """Run a validated scenario: the chain, the amplifier's zones and the wideband spectrum.

    A problem only the run can find (e.g. a signal with no power) is a
    :class:`ScenarioError` naming the stage's table.
    """
    stage = "source"
    try:
        rng = np.random.default_rng(sc.signal.seed)
        signal = _source(sc, rng)
        stage = "modulator"
        bb = _modulate(sc, signal)
        stage = "amplifier"
        model, harm = _amplifier(sc)
        a = sc.amplifier
        if a is not None and a.model != "linear":
            bb = drive(bb, model, a.backoff, reference=a.backoff_reference)
        zones = amplify(bb, model, max_harmonic=sc.analysis.max_harmonic, oversample=1 if a is None else a.oversample,
                        harmonics=harm)
        stage = "analysis"
        plan = plan_welch(zones[1].sample_rate_hz, window=sc.analysis.window, rbw_hz=sc.analysis.rbw,
                          overlap=sc.analysis.overlap)
        wb = wideband_spectrum(zones, plan, power_w=sc.antenna.power, power_kind=sc.antenna.power_kind,
                               output_filter=_output_filter(sc), start_hz=sc.analysis.start,
                               max_harmonic=sc.analysis.max_harmonic,
                               floor_dbm_per_hz=sc.analysis.floor_dbm_per_hz, workers=workers)
    except ValueError as exc:
        if isinstance(exc, MaskcheckError):
            raise ScenarioError(f"{stage}: {exc.message}", path=path) from None
        raise ScenarioError(_where(stage, exc), path=path) from None
    fund = wb.fundamental
    return Simulation(sc, wb, plan, fund.mean_power_w, fund.pep_w, fund.notes)
