"""The measurement-setup file: instrument settings, the chain, antenna factors.

One module over the ~500-line guideline, because it holds one idea: the setup file: its schema, the chain it describes and applying that chain to a spectrum are one idea (the file and what it does to a reading).

A setup file is TOML, in a format of maskcheck's own.  It says how the
analyser was (or will be) set, what sits between the transmitter and the
analyser input, and for a radiated measurement the antenna and the
distance.  ``maskcheck check --setup bench.toml`` corrects every reading
with it (:mod:`maskcheck.core.corrections`); ``maskcheck plan --setup``
states every limit at the analyser input.  An example, invented::

    schema_version = 1
    name = "HF bench, conducted (invented example)"
    measurement = "conducted"            # or "radiated"

    [instrument]
    rbw = "10 kHz"
    detector = "rms"
    reference_level = "0 dBm"
    input_attenuation = "10 dB"
    max_safe_input = "30 dBm"           # at the analyser's input connector

    [[chain]]                            # in order, from the transmitter
    name = "40 dB attenuator, 150 W"
    kind = "attenuator"
    loss_db = 40.0
    rated_power = "150 W"

    [[chain]]
    name = "2 m cable"
    kind = "cable"
    [chain.loss_table]
    frequency_mhz = [1, 10, 100]
    db = [0.1, 0.3, 0.9]

Keys
----
``schema_version`` (1), ``name``, ``notes``, ``measurement``
(``conducted`` | ``radiated``).

``[instrument]`` (every key optional): ``name``, ``rbw``, ``vbw``,
``detector`` (``rms``, ``average``, ``peak``, ``sample``, ``quasi-peak``),
``sweep_time`` (``"auto"`` or e.g. ``"2 s"``), ``reference_level``,
``input_attenuation``, ``max_safe_input`` (the most power the input
connector takes), ``max_dc_v``, ``max_mixer_level`` (the most the first
mixer should see, input level minus input attenuation, before the analyser
makes harmonics of its own), ``noise_density`` (displayed average noise
level with these settings, e.g. ``"-150 dBm/Hz"``), ``input_impedance_ohm``
(default 50).

``[[chain]]``, in order from the transmitter: ``name``, ``kind``
(``attenuator``, ``coupler``, ``cable``, ``filter``, ``amplifier``,
``other``), exactly one of ``loss_db`` / ``[chain.loss_table]`` (passive
parts; a loss is >= 0, a coupler's loss is its coupling factor) or
``gain_db`` / ``[chain.gain_table]`` (``kind = "amplifier"`` only),
``rated_power``, ``notes``.

``[radiated]`` (``measurement = "radiated"`` only): ``distance_m``,
``antenna``, and ``[radiated.antenna_factor]`` with ``db_per_m``.

``[uncertainty]`` (optional): the bench's measurement-uncertainty budget,
``coverage_factor`` (default 2) and ``[[uncertainty.contribution]]`` with
``name``, ``value``, ``distribution``, ``k`` (normal only), ``source`` and
an optional ``frequency_range`` (:mod:`maskcheck.io.setup_budget`).  When
``check`` is given no ``--guard``, the largest expanded uncertainty over the
measured span is the guard band (guarded acceptance); a ``--guard`` typed
wins, and the result says so.

Tables give their frequencies as ``frequency_hz`` / ``_khz`` / ``_mhz`` /
``_ghz`` (numbers) or ``frequency`` (strings with units), at least two
rows, strictly increasing, and one value per frequency (``db`` or
``db_per_m``).  They are interpolated linearly in dB over log frequency and
never extrapolated.

The instrument settings are recorded with the result and compared with each
trace (a trace that states another RBW or detector is warned about); they
never change a reading.  Only the chain and the antenna factor correct
readings.

Every problem of a file is reported at once, each naming the file and the
TOML key path.

References
----------
.. [1] Python standard library ``tomllib`` (TOML 1.0); pydantic v2 models
   with ``extra="forbid"``.
"""

from __future__ import annotations

import hashlib
import math
import re
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Annotated, ClassVar, Literal

import numpy as np
from pydantic import BaseModel, BeforeValidator, ConfigDict, Field, ValidationError, model_validator
from pydantic_core import PydanticCustomError

from ..core.corrections import FAR_FIELD_CONSTANT_DB, Correction, apply_corrections, correction_db
from ..core.records import ChainPartRecord, CorrectionsRecord, InstrumentRecord, RadiatedRecord, SetupRecord
from ..core.spectrum import Spectrum
from ..core.units import format_frequency, parse_db, parse_duration, parse_frequency, parse_power, w_to_dbm
from .._toml import decode_text, key_path, loads
from .setup_budget import BudgetContribution, UncertaintyTable
from ..errors import MaskcheckError, SetupError, UnitError

__all__ = ["SETUP_SCHEMA_VERSION", "CHAIN_KINDS", "SetupFile", "MeasurementSetup", "read_setup", "parse_setup",
           "ATTENUATOR_PART_NAME", "with_attenuator", "apply_setup"]

#: the version of the setup format this release reads
SETUP_SCHEMA_VERSION = 1

#: kinds of parts in the chain
CHAIN_KINDS = ("attenuator", "coupler", "cable", "filter", "amplifier", "other")

_DENSITY = re.compile(r"^\s*([+-]?\d+(?:\.\d*)?(?:[eE][+-]?\d+)?)\s*dBm\s*/\s*Hz\s*$", re.IGNORECASE)


def _custom(message: str):
    return PydanticCustomError("setup_value", "{message}", {"message": message})


def _quantity(parse, expected: str):
    def validate(raw):
        if isinstance(raw, bool) or not isinstance(raw, (str, int, float)):
            raise _custom(f"found {raw!r}; expected {expected}")
        try:
            return parse(raw)
        except MaskcheckError as exc:
            raise _custom(f"{exc.message}") from None

    return BeforeValidator(validate)


def _frequency(raw):
    v = parse_frequency(raw)
    if not v > 0:
        raise SetupError(f"{raw!r} must be above 0 Hz")
    return v


def _db(raw):
    return parse_db(raw)


def _duration(raw):
    if isinstance(raw, str) and raw.strip().lower() == "auto":
        return None
    try:
        v = parse_duration(raw) if isinstance(raw, str) else None
    except UnitError:
        v = None
    if v is None:
        raise SetupError(f"{raw!r} is not a sweep time; expected 'auto' or a duration such as '2 s' or '50 ms'")
    if not v > 0:
        raise SetupError(f"{raw!r} must be longer than 0 s")
    return v


def _density(raw):
    m = _DENSITY.match(raw) if isinstance(raw, str) else None
    if not m:
        raise SetupError(f"{raw!r} is not a noise density; expected e.g. '-150 dBm/Hz'")
    return float(m.group(1))


Frequency = Annotated[float, _quantity(_frequency, "a frequency such as '10 kHz'")]
Power = Annotated[float, _quantity(parse_power, "a power such as '30 dBm' or '1 W'")]
Db = Annotated[float, _quantity(_db, "a level difference such as '10 dB'")]
Duration = Annotated[float | None, _quantity(_duration, "'auto' or a duration such as '2 s'")]
Density = Annotated[float, _quantity(_density, "a noise density such as '-150 dBm/Hz'")]
Finite = Annotated[float, Field(allow_inf_nan=False)]


class _Model(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


class _Table(_Model):
    frequency: list[Frequency] | None = None
    frequency_hz: list[Finite] | None = None
    frequency_khz: list[Finite] | None = None
    frequency_mhz: list[Finite] | None = None
    frequency_ghz: list[Finite] | None = None

    VALUES_KEY: ClassVar[str] = "db"

    @property
    def freq_hz(self) -> list[float]:
        for key, k in (("frequency", 1.0), ("frequency_hz", 1.0), ("frequency_khz", 1e3), ("frequency_mhz", 1e6), ("frequency_ghz", 1e9)):
            v = getattr(self, key)
            if v is not None:
                return [float(x) * k for x in v]
        return []

    @property
    def values(self) -> list[float]:
        return list(getattr(self, self.VALUES_KEY))

    @model_validator(mode="after")
    def _rows(self):
        given = [k for k in ("frequency", "frequency_hz", "frequency_khz", "frequency_mhz", "frequency_ghz") if getattr(self, k) is not None]
        if len(given) != 1:
            found = ", ".join(given) if given else "none"
            raise _custom(f"found {found}; expected exactly one of frequency, frequency_hz, frequency_khz, frequency_mhz, frequency_ghz")
        f, v = self.freq_hz, self.values
        if len(f) != len(v):
            raise _custom(f"{len(f)} frequencies and {len(v)} values in {self.VALUES_KEY}; expected one value per frequency")
        if len(f) < 2:
            raise _custom("a table needs at least two rows; a single value is a fixed number (e.g. loss_db = 1.5)")
        if f[0] <= 0:
            raise _custom(f"frequency {f[0]:g} Hz must be above 0 Hz (tables are interpolated over log frequency)")
        for i in range(1, len(f)):
            if f[i] <= f[i - 1]:
                raise _custom(f"row {i + 1}: frequency {format_frequency(f[i])} does not increase (row {i}: {format_frequency(f[i - 1])})")
        return self


class LossTable(_Table):
    """A loss (or gain) per frequency, dB."""

    db: list[Finite]


class AntennaFactorTable(_Table):
    """An antenna factor per frequency, dB(1/m)."""

    db_per_m: list[Finite]
    VALUES_KEY: ClassVar[str] = "db_per_m"


class Instrument(_Model):
    """How the analyser is set (recorded; never changes a reading)."""

    name: str = ""
    rbw: Frequency | None = None
    vbw: Frequency | None = None
    detector: Literal["rms", "average", "peak", "sample", "quasi-peak"] | None = None
    sweep_time: Duration = None
    reference_level: Power | None = None
    input_attenuation: Db | None = None
    max_safe_input: Power | None = None
    max_dc_v: Annotated[float, Field(ge=0, allow_inf_nan=False)] | None = None
    max_mixer_level: Power | None = None
    noise_density: Density | None = None
    input_impedance_ohm: Annotated[float, Field(gt=0, allow_inf_nan=False)] = 50.0

    @model_validator(mode="after")
    def _attenuation(self):
        if self.input_attenuation is not None and self.input_attenuation < 0:
            raise _custom(f"input_attenuation {self.input_attenuation:g} dB must be >= 0")
        return self


class ChainPart(_Model):
    """One part between the transmitter (or antenna) and the analyser input."""

    name: Annotated[str, Field(min_length=1)]
    kind: Literal["attenuator", "coupler", "cable", "filter", "amplifier", "other"]
    loss_db: Db | None = None
    loss_table: LossTable | None = None
    gain_db: Db | None = None
    gain_table: LossTable | None = None
    rated_power: Power | None = None
    notes: str = ""

    @model_validator(mode="after")
    def _one_value(self):
        given = [k for k in ("loss_db", "loss_table", "gain_db", "gain_table") if getattr(self, k) is not None]
        if len(given) != 1:
            found = ", ".join(given) if given else "none"
            raise _custom(f"found {found}; expected exactly one of loss_db, loss_table, gain_db, gain_table")
        (key,) = given
        if self.kind == "amplifier" and key.startswith("loss"):
            raise _custom(f"an amplifier takes gain_db or gain_table, found {key}")
        if self.kind != "amplifier" and key.startswith("gain"):
            raise _custom(f"a passive part ({self.kind}) takes loss_db or loss_table, found {key}; a part with gain is kind = 'amplifier'")
        values = [self.loss_db] if key == "loss_db" else self.loss_table.db if key == "loss_table" else []
        if any(v < 0 for v in values):
            raise _custom(f"{key} has a negative loss ({min(values):g} dB); a passive part has loss >= 0 (a part with gain is kind = 'amplifier')")
        return self

    def correction(self, key: str) -> Correction:
        """The dB this part adds back to a reading (a loss is added, a gain taken off)."""
        if self.loss_db is not None:
            return Correction(self.name, self.kind, add_db=float(self.loss_db), key=f"{key}.loss_db")
        if self.gain_db is not None:
            return Correction(self.name, self.kind, add_db=-float(self.gain_db), key=f"{key}.gain_db")
        table, sign, sub = (self.loss_table, 1.0, "loss_table") if self.loss_table is not None else (self.gain_table, -1.0, "gain_table")
        return Correction(self.name, self.kind, freq_hz=np.asarray(table.freq_hz), table_db=sign * np.asarray(table.values), key=f"{key}.{sub}")


class Radiated(_Model):
    """A radiated measurement: the antenna, its factor and the distance."""

    distance_m: Annotated[float, Field(gt=0, allow_inf_nan=False)]
    antenna: str = ""
    antenna_factor: AntennaFactorTable


class SetupFile(_Model):
    """The validated content of a setup file."""

    schema_version: Literal[1]
    name: str = ""
    notes: str = ""
    measurement: Literal["conducted", "radiated"] = "conducted"
    instrument: Instrument = Instrument()
    chain: list[ChainPart] = []
    radiated: Radiated | None = None
    uncertainty: UncertaintyTable | None = None

    @model_validator(mode="after")
    def _radiated(self):
        if self.measurement == "radiated" and self.radiated is None:
            raise _custom("measurement = 'radiated' needs a [radiated] table with distance_m and antenna_factor")
        if self.measurement == "conducted" and self.radiated is not None:
            raise _custom("a [radiated] table is given but measurement = 'conducted'; set measurement = 'radiated' or drop the table")
        return self


_TABLES = {
    (): SetupFile,
    ("instrument",): Instrument,
    ("chain",): ChainPart,
    ("chain", "loss_table"): LossTable,
    ("chain", "gain_table"): LossTable,
    ("radiated",): Radiated,
    ("radiated", "antenna_factor"): AntennaFactorTable,
    ("uncertainty",): UncertaintyTable,
    ("uncertainty", "contribution"): BudgetContribution,
}



def _message(error: dict) -> str:
    kind = error.get("type")
    loc = tuple(error.get("loc", ()))
    if kind == "extra_forbidden":
        model = _TABLES.get(tuple(p for p in loc[:-1] if isinstance(p, str)))
        takes = f"; this table takes: {', '.join(model.model_fields)}" if model else ""
        return f"unknown key {loc[-1]!r}{takes}"
    if kind == "missing":
        return "required key is missing"
    msg = error.get("msg", "")
    if kind == "setup_value":
        return msg
    if kind in ("model_type", "model_attributes_type"):
        return f"expected a table, found {error.get('input')!r}"
    if "input" in error and not isinstance(error["input"], (dict, list)):
        msg = f"{msg} (found {error['input']!r})"
    return msg


@dataclass(frozen=True, eq=False)
class MeasurementSetup:
    """A setup file, read and validated, with what it means for readings.

    Attributes
    ----------
    file : SetupFile
        The validated content.
    path : str
        The file as named ("" when built in memory).
    sha256 : str
        SHA-256 of the file's bytes ("" when built in memory).
    """

    file: SetupFile
    path: str = ""
    sha256: str = ""

    @property
    def radiated(self) -> bool:
        return self.file.measurement == "radiated"

    @property
    def instrument(self) -> Instrument:
        return self.file.instrument

    def chain_corrections(self) -> list[Correction]:
        """One correction per part of the chain, in order."""
        return [part.correction(f"chain[{i}]") for i, part in enumerate(self.file.chain)]

    def antenna_factor(self) -> Correction | None:
        """The antenna factor as a correction (radiated only)."""
        r = self.file.radiated
        if r is None:
            return None
        t = r.antenna_factor
        return Correction(r.antenna or "antenna factor", "antenna-factor", freq_hz=np.asarray(t.freq_hz),
                          table_db=np.asarray(t.values), key="radiated.antenna_factor")

    def offset_db(self, freq_hz) -> tuple[np.ndarray, np.ndarray]:
        """dB from a reading at the analyser input to the judged quantity, and where it is known.

        Conducted: the chain's net loss (reading + offset = power at the
        transmitter output).  Radiated: reading (dBm) + offset = far-field
        EIRP (dBm) at the setup's distance.
        """
        f = np.asarray(freq_hz, dtype=float)
        chain, known = correction_db(self.chain_corrections(), f)
        if not self.radiated:
            return chain, known
        af = self.antenna_factor()
        ok = af.covers(f)
        known = known & ok
        z = self.instrument.input_impedance_ohm
        afv = np.zeros(f.shape)
        if np.any(ok):
            afv[ok] = af.at(f[ok])
        off = 10.0 * math.log10(z) + 90.0 + chain + afv - FAR_FIELD_CONSTANT_DB + 20.0 * math.log10(self.file.radiated.distance_m)
        return np.where(known, off, 0.0), known

    def apply(self, spectrum: Spectrum) -> Spectrum:
        """The spectrum corrected by the chain (and antenna factor), with the records in its metadata.

        The corrected spectrum gains ``setup`` (this file, summarised:
        :meth:`record`) and ``corrections`` (a
        :class:`~maskcheck.core.records.CorrectionsRecord`: what was applied,
        what was left out and why, warnings), which :func:`maskcheck.check`
        copies into the result.
        """
        corr = self.chain_corrections()
        if not corr and not self.radiated:
            out, record = spectrum, CorrectionsRecord(
                quantity="power at the transmitter output", measurement="conducted", applied=(),
                total_db_min=0.0, total_db_max=0.0, removed_hz=(),
                warnings=("the setup lists no chain: readings are taken as the power at the transmitter output",),
                interpolation="none: the setup has no chain",
            )
        else:
            try:
                out, record = apply_corrections(
                    spectrum, corr, quantity=self.file.measurement, antenna_factor=self.antenna_factor(),
                    distance_m=None if self.file.radiated is None else self.file.radiated.distance_m,
                    impedance_ohm=self.instrument.input_impedance_ohm,
                )
            except MaskcheckError as exc:
                raise SetupError(exc.message, path=self.path or None, where=exc.where, param=exc.param) from None
        warnings = list(record.warnings) + self._compare(spectrum)
        if self.radiated:
            warnings.append(
                f"setup: radiated measurement at {self.file.radiated.distance_m:g} m: levels are the far-field EIRP "
                "equivalent of the field strength (E = sqrt(30 EIRP) / d); limits in dBuV/m are compared in the same form"
            )
        for r in record.removed_hz:
            warnings.append(f"setup: {r.reason}")
        return replace(out, setup=self.record(), corrections=replace(record, warnings=tuple(warnings)))

    def _compare(self, spectrum: Spectrum) -> list[str]:
        """Warnings where the trace says otherwise than the setup's instrument settings."""
        out = []
        ins = self.instrument
        if ins.rbw is not None:
            lo, hi = float(spectrum.rbw_hz.min()), float(spectrum.rbw_hz.max())
            if abs(lo - ins.rbw) > 1e-6 * ins.rbw or abs(hi - ins.rbw) > 1e-6 * ins.rbw:
                got = format_frequency(lo) if lo == hi else f"{format_frequency(lo)} to {format_frequency(hi)}"
                out.append(f"setup: the setup gives RBW {format_frequency(ins.rbw)}, the trace {got}; the trace's RBW is used")
        if ins.detector is not None and spectrum.detector not in ("unknown", ins.detector):
            out.append(f"setup: the setup gives a '{ins.detector}' detector, the trace '{spectrum.detector}'; the trace's is used")
        return out

    def record(self) -> SetupRecord:
        """The setup as a record, for results and plans (SI units)."""
        f = self.file
        ins = f.instrument

        def dbm(w):
            return None if w is None else float(w_to_dbm(w))

        inst = InstrumentRecord(
            name=ins.name or None,
            rbw_hz=ins.rbw,
            vbw_hz=ins.vbw,
            detector=ins.detector,
            sweep_time_s=ins.sweep_time,
            reference_level_dbm=dbm(ins.reference_level),
            input_attenuation_db=ins.input_attenuation,
            max_safe_input_dbm=dbm(ins.max_safe_input),
            max_dc_v=ins.max_dc_v,
            max_mixer_level_dbm=dbm(ins.max_mixer_level),
            noise_density_dbm_per_hz=ins.noise_density,
            input_impedance_ohm=ins.input_impedance_ohm,
        )
        chain = tuple(
            ChainPartRecord(part.correction(f"chain[{i}]").record(), rated_power_w=part.rated_power, notes=part.notes)
            for i, part in enumerate(f.chain)
        )
        radiated = None
        if f.radiated is not None:
            radiated = RadiatedRecord(distance_m=f.radiated.distance_m, antenna=f.radiated.antenna,
                                      antenna_factor=self.antenna_factor().record())
        return SetupRecord(path=self.path, sha256=self.sha256, schema_version=f.schema_version, name=f.name, notes=f.notes,
                           measurement=f.measurement, instrument=inst, chain=chain, radiated=radiated,
                           uncertainty=None if f.uncertainty is None else f.uncertainty.spec())

    def to_dict(self) -> dict:
        """The setup as plain data, for results and plans (SI units): ``record().to_dict()``."""
        return self.record().to_dict()


def parse_setup(text: str, *, path: str = "", sha256: str = "") -> MeasurementSetup:
    """Validate the text of a setup file.

    Raises
    ------
    SetupError
        Naming the file and the line (TOML syntax) or the key path of every
        problem, all at once.
    """
    label = path or "setup"
    raw = loads(text, lambda message, where: SetupError(message, path=label, where=where),
                hint="; expected a setup file (see 'maskcheck plan --help')")
    if isinstance(raw.get("schema_version"), int) and raw["schema_version"] != SETUP_SCHEMA_VERSION:
        raise SetupError(f"found {raw['schema_version']!r}; this release reads setup files of version {SETUP_SCHEMA_VERSION}",
                         path=label, where="schema_version")
    try:
        model = SetupFile.model_validate(raw)
    except ValidationError as exc:
        problems = [(key_path(e.get("loc", ())), _message(e)) for e in exc.errors(include_url=False)]
        if len(problems) == 1:
            (where, msg), = problems
            raise SetupError(msg, path=label, where=where) from None
        lines = [f"{label}, {w}: {m}" for w, m in problems]
        # one line, as scenario errors: the file named once, each problem with its key path
        raise SetupError(f"{len(lines)} problems: " + "; ".join(f"{w}: {m}" for w, m in problems),
                         path=label, problems=lines) from None
    setup = MeasurementSetup(model, path, sha256)
    try:  # the tables in Hz (a frequency in MHz can overflow to infinity there): checked now, with the file named
        setup.chain_corrections()
        setup.antenna_factor()
    except MaskcheckError as exc:
        raise SetupError(exc.message, path=label, where=exc.where, param=exc.param) from None
    return setup


def read_setup(path) -> MeasurementSetup:
    """Read and validate a setup file (see the module notes for the format).

    Parameters
    ----------
    path : str or os.PathLike

    Returns
    -------
    MeasurementSetup
        With the file's path and the SHA-256 of its bytes.

    Raises
    ------
    SetupError
        For a file that is missing, not UTF-8, not TOML, or not a valid
        setup (every problem at once, with its key path).
    """
    p = Path(path)
    try:
        data = p.read_bytes()
    except FileNotFoundError:
        raise SetupError("does not exist; expected a measurement-setup file (TOML)", path=p) from None
    except OSError as exc:
        raise SetupError(f"cannot be read ({exc.strerror or exc})", path=p) from None
    text = decode_text(data, "setup files", lambda message, where: SetupError(message, path=p, where=where))
    return parse_setup(text, path=str(p), sha256=hashlib.sha256(data).hexdigest())


#: the name of the chain part :func:`with_attenuator` adds (as the records and reports show it)
ATTENUATOR_PART_NAME = "fixed attenuator given with the command"


def with_attenuator(setup: MeasurementSetup | None, attenuator_db: float) -> MeasurementSetup:
    """A setup whose chain ends with a fixed attenuator of ``attenuator_db`` ahead of the analyser.

    The pad given on the command line (``--attenuator 40dB``) is one more
    part of the chain, after those of ``setup`` (or the only part, without a
    setup): :meth:`MeasurementSetup.apply` then corrects the readings and
    records it exactly as a pad written in a setup file.  The returned setup
    keeps the file's path and SHA-256 (it is still that file, plus the pad).

    Parameters
    ----------
    setup : MeasurementSetup or None
    attenuator_db : float
        The pad's loss, dB, finite and >= 0.

    Raises
    ------
    SetupError
        For a negative or non-finite loss (``param="attenuator_db"``).
    """
    v = float(attenuator_db)
    if not (math.isfinite(v) and v >= 0):
        raise SetupError(f"attenuator_db={v:g} must be a finite loss >= 0 dB (a pad ahead of the analyser)",
                         param="attenuator_db")
    if setup is None:  # the pad is the whole chain: a record of corrections, not a file
        part = ChainPart(name=ATTENUATOR_PART_NAME, kind="attenuator", loss_db=v,
                         notes="given with the command; no setup file, so it is the whole chain; "
                               "a correction applied to every trace")
        return MeasurementSetup(SetupFile(schema_version=1, name=f"no setup file: a fixed {v:g} dB attenuator "
                                          "given with the command, applied to every trace", chain=[part]))
    part = ChainPart(name=ATTENUATOR_PART_NAME, kind="attenuator", loss_db=v,
                     notes="given with the command, after the setup file's chain; a correction applied to every trace")
    file = setup.file.model_copy(update={"chain": [*setup.file.chain, part]})
    return MeasurementSetup(file, setup.path, setup.sha256)


def apply_setup(spectrum: Spectrum, setup=None, *, attenuator_db: float | None = None) -> Spectrum:
    """The spectrum corrected by a measurement setup and/or a fixed pad: one call, as ``check --setup --attenuator``.

    Without it a script judges the levels at the analyser input; with it the
    levels are those at the transmitter output (or, radiated, the far-field
    EIRP equivalent), and the spectrum carries the ``setup`` and
    ``corrections`` records that :func:`maskcheck.check` copies into the
    result (the setup file is listed among its inputs).

    Parameters
    ----------
    spectrum : Spectrum
        Readings at the analyser input, in dBm (a calibrated spectrum).
    setup : MeasurementSetup, str or os.PathLike, optional
        A setup read with :func:`read_setup`, or the path of a setup file.
    attenuator_db : float, optional
        A fixed pad ahead of the analyser, dB >= 0, after the setup's chain
        (:func:`with_attenuator`; ``check --attenuator``).

    Returns
    -------
    Spectrum

    Raises
    ------
    SetupError
        For a bad setup file, a negative pad (``param="attenuator_db"``), a
        spectrum relative to full scale (``param="spectrum"``: a loss added
        to dBFS gives no power), or neither a setup nor a pad
        (``param="setup"``).

    Examples
    --------
    >>> import numpy as np
    >>> from maskcheck.core.spectrum import Spectrum
    >>> s = Spectrum(np.array([7.0e6, 7.1e6]), np.array([1e-6, 1e-3]), 1e3)
    >>> float(apply_setup(s, attenuator_db=40.0).level_dbm[1])
    40.0
    """
    if setup is None and attenuator_db is None:
        raise SetupError("give a setup (a MeasurementSetup or the path of a setup file), attenuator_db, or both",
                         param="setup")
    if spectrum.level_scale == "dBFS":
        raise SetupError("spectrum is relative to full scale (dBFS): calibrate it first (read_recording with "
                         "full_scale_w or ref_tone_hz), then correct it for the setup", param="spectrum")
    if setup is not None and not isinstance(setup, MeasurementSetup):
        setup = read_setup(setup)
    if attenuator_db is not None:
        setup = with_attenuator(setup, attenuator_db)
    return setup.apply(spectrum)
