"""The scenario file's schema: pydantic models of every table, with units.

One idea: what a scenario file may say and in which units; loading, the
chain checks and running are in :mod:`maskcheck.sim.scenario`, which
re-exports the public names.
"""

from __future__ import annotations

from typing import Annotated, Literal, Optional, Union

from pydantic import BaseModel, BeforeValidator, ConfigDict, Field
from pydantic_core import PydanticCustomError

from ..core.estimate import WINDOWS, window_name
from ..core.units import parse_db, parse_duration, parse_frequency, parse_power
from ..errors import MaskcheckError, UnitError
from . import sources

__all__ = ["SCENARIO_VERSION", "Scenario", "MAX_RECORD_SAMPLES", "MAX_ZONE_SAMPLES", "MIN_KEYING_UNIT_SAMPLES"]

#: The scenario format version this module reads.
SCENARIO_VERSION = 1

#: Bounds on what a scenario may ask of memory, checked from the file before any sample is made.
#: One record of the fundamental zone (signal.duration x signal.sample_rate x amplifier.oversample)
#: holds at most this many samples: 2**24, about 350 s at 48 kS/s (each zone is a complex128 array of
#: 256 MiB at the bound).
MAX_RECORD_SAMPLES = 1 << 24
#: ... and all the zones the amplifier makes (the record x (analysis.max_harmonic + 1)) at most this
#: many: 2**26 complex128 samples, 1 GiB.
MAX_ZONE_SAMPLES = 1 << 26
#: A keying unit (a Morse dot, a test dot) must last at least this many samples to be drawn at all.
MIN_KEYING_UNIT_SAMPLES = 2


# ------------------------------------------------------------------ names

def _spelled(convert):
    """A validator turning a library alias ("ellip", "blackmanharris") into the spelled name ("elliptic", ...).

    A name that is neither is left as it is, so that the Literal reports it with the names offered.
    """
    def validate(v):
        if not isinstance(v, str):
            return v
        try:
            return convert(v)
        except (MaskcheckError, ValueError):
            return v
    return BeforeValidator(validate)


def _filter_name(v: str) -> str:
    from .filters import filter_kind  # scipy.signal: imported when a filter is named, not with the schema

    return filter_kind(v)


def _window_name(v: str) -> str:
    return window_name(v)


#: filter families by their spelled names; scipy's short names ("butter", "cheby1", "cheby2", "ellip") are aliases
IfFilterKind = Annotated[Literal["butterworth", "chebyshev-1", "elliptic"], _spelled(_filter_name)]
OutputFilterKind = Annotated[Literal["butterworth", "chebyshev-1", "chebyshev-2", "elliptic"], _spelled(_filter_name)]
#: estimation windows by their spelled names ("blackmanharris", "flattop" are aliases); no Kaiser here
WindowName = Annotated[Literal[tuple(w for w in WINDOWS if w != "kaiser")], _spelled(_window_name)]  # type: ignore[valid-type]


# ------------------------------------------------------------------ quantities

def _unit_value(parse, what: str):
    def convert(v):
        if isinstance(v, bool):
            raise PydanticCustomError("scenario_value", "expected {what}, found {found}", {"what": what, "found": repr(v)})
        try:
            return parse(v)
        except MaskcheckError as exc:
            raise PydanticCustomError("scenario_value", "{msg}", {"msg": exc.message}) from None
    return BeforeValidator(convert)


def _parse_time(v) -> float:
    try:
        return parse_duration(v, default_unit="s")
    except UnitError:
        raise PydanticCustomError("scenario_value", "{found} is not a time (expected e.g. '2 s' or '5 ms')",
                                  {"found": repr(v)}) from None


def _freq(v):
    return parse_frequency(v, default_unit="Hz")


def _power(v):
    return parse_power(v, default_unit="W")


Hz = Annotated[float, _unit_value(_freq, "a frequency")]
PosHz = Annotated[float, _unit_value(_freq, "a frequency"), Field(gt=0, allow_inf_nan=False)]
NonNegHz = Annotated[float, _unit_value(_freq, "a frequency"), Field(ge=0, allow_inf_nan=False)]
PosW = Annotated[float, _unit_value(_power, "a power"), Field(gt=0, allow_inf_nan=False)]
Db = Annotated[float, _unit_value(parse_db, "a level difference in dB"), Field(allow_inf_nan=False)]
PosDb = Annotated[float, _unit_value(parse_db, "a level difference in dB"), Field(gt=0, allow_inf_nan=False)]
PosS = Annotated[float, BeforeValidator(_parse_time), Field(gt=0, allow_inf_nan=False)]
NonNegS = Annotated[float, BeforeValidator(_parse_time), Field(ge=0, allow_inf_nan=False)]
Finite = Annotated[float, Field(allow_inf_nan=False)]
Order = Annotated[int, Field(ge=1, le=20, strict=True)]


class _Table(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


# ------------------------------------------------------------------ tables

class Signal(_Table):
    """``[signal]``: carrier, sample rate, record length and random seed."""

    carrier: PosHz
    sample_rate: PosHz = 48000.0
    duration: PosS = 1.0
    seed: Annotated[int, Field(ge=0, strict=True)] = 1


class ToneSource(_Table):
    kind: Literal["tone"]
    frequency: PosHz = sources.TELEPHONY_TEST_TONE_HZ
    amplitude: Annotated[float, Field(gt=0, le=1)] = 1.0


class TwoToneSource(_Table):
    kind: Literal["two-tone"]
    f1: Optional[PosHz] = None
    f2: Optional[PosHz] = None
    test_pair: Optional[PosHz] = None  # 47 CFR 2.1049(c)(2) pair for this authorised bandwidth


class MultitoneSource(_Table):
    kind: Literal["multitone"]
    frequencies: list[PosHz] = Field(min_length=1)
    amplitudes: Optional[list[Annotated[float, Field(ge=0, allow_inf_nan=False)]]] = None


class SpeechSource(_Table):
    kind: Literal["speech"]
    low: PosHz = 300.0
    high: PosHz = 3000.0
    knee: PosHz = 500.0
    tilt_db_per_octave: Finite = -6.0


class MorseSource(_Table):
    kind: Literal["morse"]
    text: str = "PARIS"
    wpm: Annotated[float, Field(gt=0, allow_inf_nan=False)] = 20.0
    convention: Literal["paris", "itu_48unit"] = "paris"
    rise_time: NonNegS = 0.0


class DotsSource(_Table):
    kind: Literal["dots"]
    dots_per_s: Annotated[float, Field(gt=0, allow_inf_nan=False)] = sources.TEST_DOTS_PER_S
    rise_time: NonNegS = 0.0


class SymbolSource(_Table):
    kind: Literal["symbols"]
    rate: PosHz
    order: Annotated[int, Field(ge=2, strict=True)] = 2


Source = Annotated[Union[ToneSource, TwoToneSource, MultitoneSource, SpeechSource, MorseSource, DotsSource, SymbolSource],
                   Field(discriminator="kind")]

_AUDIO = ("tone", "two-tone", "multitone", "speech")
_KEYING = ("morse", "dots")


class AmMod(_Table):
    kind: Literal["am"]
    index: Annotated[float, Field(ge=0, allow_inf_nan=False)] = 0.8
    overmodulation: Literal["clip", "invert"] = "clip"


class DsbMod(_Table):
    kind: Literal["dsb-sc"]
    imbalance: Finite = 0.0


class SsbPhasingMod(_Table):
    kind: Literal["ssb-phasing"]
    sideband: Literal["upper", "lower"] = "upper"
    gain_error: Db = 0.0
    phase_error_deg: Finite = 0.0
    carrier_leak: Optional[Db] = None  # carrier relative to a full-scale tone, dB (negative)


class SsbFilterMod(_Table):
    kind: Literal["ssb-filter"]
    sideband: Literal["upper", "lower"] = "upper"
    imbalance: Finite = 0.0


class FmMod(_Table):
    kind: Literal["fm"]
    deviation: NonNegHz
    pre_emphasis: Optional[PosS] = None


class PmMod(_Table):
    kind: Literal["pm"]
    deviation_rad: Annotated[float, Field(ge=0, allow_inf_nan=False)]
    pre_emphasis: Optional[PosS] = None


class CwMod(_Table):
    kind: Literal["cw"]


class FskMod(_Table):
    kind: Literal["fsk"]
    deviation: PosHz
    pulse: Literal["rect", "rrc"] = "rect"
    roll_off: Annotated[float, Field(gt=0, le=1)] = 0.35


class LinearMod(_Table):
    kind: Literal["psk", "qam"]
    pulse: Literal["rrc", "rect"] = "rrc"
    roll_off: Annotated[float, Field(gt=0, le=1)] = 0.35


Modulator = Annotated[Union[AmMod, DsbMod, SsbPhasingMod, SsbFilterMod, FmMod, PmMod, CwMod, FskMod, LinearMod],
                      Field(discriminator="kind")]


class IfFilterTable(_Table):
    """``[if_filter]``: the sideband filter of the filter method (defaults: part 1's 8-pole elliptic)."""

    low: NonNegHz = 300.0
    high: PosHz = 3000.0
    kind: IfFilterKind = "elliptic"
    order: Order = 8
    ripple: Optional[PosDb] = None
    stopband: Optional[PosDb] = None


class AmplifierTable(_Table):
    """``[amplifier]``: the power amplifier and its drive."""

    model: Literal["linear", "polynomial", "rapp", "saleh"]
    coefficients: Optional[list[Finite]] = None  # polynomial a1, a2, ...
    gain: Annotated[float, Field(gt=0, allow_inf_nan=False)] = 1.0  # rapp
    saturation_v: Annotated[float, Field(gt=0, allow_inf_nan=False)] = 1.0  # rapp
    smoothness: Annotated[float, Field(gt=0, allow_inf_nan=False)] = 2.0  # rapp
    alpha_a: Annotated[float, Field(gt=0, allow_inf_nan=False)] = 2.1587  # saleh
    beta_a: Annotated[float, Field(gt=0, allow_inf_nan=False)] = 1.1517
    alpha_phi: Finite = 4.0033
    beta_phi: Annotated[float, Field(ge=0, allow_inf_nan=False)] = 9.1040
    harmonics: Optional[list[Finite]] = None  # rapp/saleh: a polynomial for zones 0 and 2..
    backoff: Db = 6.0
    backoff_reference: Literal["pep", "mean"] = "pep"
    oversample: Annotated[int, Field(ge=1, le=16, strict=True)] = 1


class OutputFilterTable(_Table):
    """``[output_filter]``: the harmonic low-pass at RF."""

    kind: OutputFilterKind = "butterworth"
    order: Order = 5
    cutoff: PosHz
    ripple: Optional[PosDb] = None
    stopband: Optional[PosDb] = None


class Antenna(_Table):
    """``[antenna]``: the fundamental's power at the antenna port."""

    power: PosW
    power_kind: Literal["mean", "pep"] = "mean"


class Analysis(_Table):
    """``[analysis]``: how the wideband spectrum is estimated."""

    rbw: PosHz = 10.0
    window: WindowName = "blackman-harris"
    overlap: Annotated[float, Field(ge=0, lt=1)] = 0.5
    start: PosHz = 9e3
    max_harmonic: Annotated[int, Field(ge=1, le=40, strict=True)] = 10
    floor_dbm_per_hz: Finite = -150.0


class CheckDefaults(_Table):
    """``[check]``: defaults for ``maskcheck simulate --mask`` (all optional)."""

    mask: Optional[str] = None
    designator: Optional[str] = None
    guard: Optional[Annotated[float, _unit_value(parse_db, "dB"), Field(ge=0)]] = None


class Scenario(_Table):
    """A whole scenario file, validated."""

    scenario_version: Literal[1]
    name: str
    description: str = ""
    signal: Signal
    source: Source
    modulator: Modulator
    if_filter: Optional[IfFilterTable] = None
    amplifier: Optional[AmplifierTable] = None
    output_filter: Optional[OutputFilterTable] = None
    antenna: Antenna
    analysis: Analysis = Analysis()
    check: CheckDefaults = CheckDefaults()


