"""The forms a limit takes, each declared once.

The limit of a region is one or more *terms*: an attenuation below the
reference power, an absolute level (W, dBm, dBW), a power density (dBm/Hz)
or a field strength at a distance (µV/m, dBµV/m).  Each form is one entry of
:data:`LIMIT_FORMS`, which says

* ``key``: its key in a mask file's ``limit`` table;
* ``kind``: ``attenuation``, ``level``, ``density``, ``field``, ``psd`` or
  ``bandwidth``;
* ``measure``: what of the spectrum the value is compared with: ``level``
  (the power in the reference bandwidth along the axis: every form but one),
  or ``bandwidth`` (a width of the emission: ``min_bandwidth_hz`` and
  ``max_bandwidth_hz``, the x-dB bandwidth that must be at least / at most the
  value, 47 CFR 15.247(a)(2), 15.231(c));
* ``family``: the value family the file gives (:mod:`maskcheck.masks.values`);
* ``relative``: whether it is taken below the reference power (only a
  relative term can be judged on an uncalibrated, dBFS recording);
* ``since``: the mask-file ``schema_version`` that introduced it;
* its conversion to a power in the reference bandwidth, W (:meth:`LimitForm.to_w`);
* its words in a limit text, evaluated point by point or once per station.

The schema (:mod:`maskcheck.masks.models`), the version table
(:mod:`maskcheck.masks.versions`), the evaluation
(:mod:`maskcheck.masks.limits`) and the limit texts read this table; a new
form is one entry here (and a test at its published sample points).

Conversions (W in the reference bandwidth B)
--------------------------------------------
* attenuation A (dB) below the reference power P: ``P * 10**(-A/10)`` [1]_;
* level L: W as it is, dBm ``10**((L - 30)/10)``, dBW ``10**(L/10)``; an ERP
  level is an EIRP level 2.15 dB higher (half-wave dipole gain) [3]_;
* density D (dBm/Hz): ``D + 10 log10(B / 1 Hz)`` dBm;
* peak power spectral density S (dBm in the reference bandwidth B, over the
  emission itself): ``10**((S - 30)/10)``, judged as the highest power in any
  B inside the region (47 CFR 15.247(e));
* a minimum bandwidth is not a power: its value stays in Hz and the check
  compares the emission's x-dB bandwidth with it;
* field strength E at distance d: the far-field EIRP
  ``E(dBµV/m) - 104.77 + 20 log10(d / 1 m)`` dBm
  (:data:`maskcheck.core.corrections.FAR_FIELD_CONSTANT_DB`) [2]_.

References
----------
.. [1] 47 CFR 97.307(d), (e): attenuation below the mean power, and absolute
   levels, that must both be met.
.. [2] Far field of an isotropic radiator, E = sqrt(30 P) / d; the project
   fact sheet §7.1-7.2.
.. [3] Half-wave dipole gain over isotropic, 2.15 dBi (ERP = EIRP - 2.15 dB).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np

from ..core.corrections import FAR_FIELD_CONSTANT_DB, eirp_dbm_from_field
from ..core.units import format_power

__all__ = [
    "LimitForm",
    "TermContext",
    "LIMIT_FORMS",
    "LIMIT_KEYS",
    "LEVEL_FORMS",
    "FORMS",
    "DIPOLE_GAIN_DBI",
    "REFERENCE_WORDS",
    "FIELD_RELATION_TEXT",
    "forms_of",
]

#: Gain of a half-wave dipole over an isotropic radiator, dBi (ERP = EIRP - 2.15 dB).
DIPOLE_GAIN_DBI = 2.15

#: What relative limits are below, in the words of a limit text (by ``reference_power.kind``).
REFERENCE_WORDS = {
    "mean": "mean power",
    "pep": "PEP",
    "carrier": "the unmodulated carrier",
    "channel": "the total power in the channel bandwidth",
    "dbsd": "the highest power in any reference bandwidth inside the necessary band (0 dBsd)",
    "none": "no reference (absolute)",
}


@dataclass(frozen=True)
class TermContext:
    """What a term needs to become a power in the reference bandwidth.

    Attributes
    ----------
    reference_power_w : float
        The power relative terms are below, W.
    erp_gain_db : float
        Added to absolute levels: 2.15 dB for an ERP limit, else 0.
    bandwidth_hz : numpy.ndarray or None
        The reference bandwidth at each frequency, Hz (density terms).
    distance_m : float or None
        The measurement distance of a field-strength term, m.
    """

    reference_power_w: float
    erp_gain_db: float = 0.0
    bandwidth_hz: np.ndarray | None = None
    distance_m: float | None = None


def _field_w(field_dbuv_per_m, ctx: TermContext):
    return 10.0 ** ((eirp_dbm_from_field(field_dbuv_per_m, ctx.distance_m) - 30.0) / 10.0)


@dataclass(frozen=True)
class LimitForm:
    """One form of limit term (see the module docstring).

    Attributes
    ----------
    key, kind, family, unit : str
        The file's key, the kind of term, the value family, and the unit of
        the number the file gives (as words show it).
    measure : str
        ``"level"``: compared with the power in the reference bandwidth along
        the axis; ``"bandwidth"``: compared with a width of the emission (the
        value stays in Hz; :attr:`convert` is the identity).
    relative : bool
        Taken below the reference power.
    since : int
        The ``schema_version`` that introduced the key.
    convert : callable
        ``(value, ctx) -> W`` with ``value`` in :attr:`unit` (float or array).
    words : str
        Template of the term in a limit text evaluated point by point
        (``{text}`` the value as written, ``{unit}``, ``{reference}``, ``{at}``).
    fixed_words : str or None
        Template of the term when the limit is evaluated once for the station
        (``{value}``); None: this form is always evaluated point by point.
    positive_unit : str or None
        Not None: the value must be > 0 (a linear unit); the unit the error
        message names after the 0 (``" W"``, or ``""``).
    what : str
        What the value is, in words (the JSON Schema's description of its type).
    description : str or None
        The key's own description in the JSON Schema (None: only the type's).
    """

    key: str
    kind: str
    family: str
    unit: str
    relative: bool
    since: int
    convert: Callable
    words: str
    fixed_words: str | None = None
    positive_unit: str | None = None
    what: str = "absolute limit"
    description: str | None = None
    measure: str = "level"

    @property
    def pointwise(self) -> bool:
        """True when the form is always evaluated point by point (density, field strength)."""
        return self.fixed_words is None

    @property
    def needs_bandwidth(self) -> bool:
        """True when the conversion needs the reference bandwidth at each frequency."""
        return self.kind == "density"

    def to_w(self, value, ctx: TermContext):
        """The term as a power in the reference bandwidth, W (float or array, as ``value``)."""
        return self.convert(value, ctx)

    def shown(self, value, evaluated: float) -> str:
        """The term's value in a fixed limit text: the number once evaluated, or the expression as written.

        ``value`` is the file's :class:`~maskcheck.masks.values.Value`;
        ``evaluated`` is the number a relative term was evaluated to (dB),
        or the power an absolute term allows (W).
        """
        if self.relative:
            return f"{evaluated:g}" if value.is_constant else value.text
        return format_power(evaluated).split(" (")[0] if value.is_constant else f"{value.text} {value.unit}"

    def phrase(self, text: str, *, reference_kind: str, distance_m: float | None) -> str:
        """The term in a limit text evaluated point by point."""
        at = f" at {distance_m:g} m" if distance_m is not None else ""
        return self.words.format(text=text, unit=self.unit, reference=REFERENCE_WORDS[reference_kind], at=at)


#: Every form of limit term, in the order a limit text lists them.
LIMIT_FORMS: tuple[LimitForm, ...] = (
    LimitForm(
        "attenuation_db", "attenuation", "db", "dB", relative=True, since=1,
        convert=lambda v, c: c.reference_power_w * 10.0 ** (-v / 10.0),
        words="{text} dB below {reference}", fixed_words="{value} dB below {reference}",
        what="attenuation below the reference power",
    ),
    LimitForm(
        "level_w", "level", "power_w", "W", relative=False, since=1,
        convert=lambda v, c: v * 10.0 ** (c.erp_gain_db / 10.0),
        words="{text} {unit}", fixed_words="at most {value}", positive_unit=" W",
    ),
    LimitForm(
        "level_dbm", "level", "power_dbm", "dBm", relative=False, since=1,
        convert=lambda v, c: 10.0 ** ((v + c.erp_gain_db - 30.0) / 10.0),
        words="{text} {unit}", fixed_words="at most {value}",
    ),
    LimitForm(
        "level_dbw", "level", "power_dbw", "dBW", relative=False, since=3,
        convert=lambda v, c: 10.0 ** ((v + c.erp_gain_db) / 10.0),
        words="{text} {unit}", fixed_words="at most {value}", description="v3: absolute limit in dBW",
    ),
    LimitForm(
        "density_dbm_per_hz", "density", "dbm_per_hz", "dBm/Hz", relative=False, since=3,
        convert=lambda v, c: 10.0 ** ((v + c.erp_gain_db + 10.0 * np.log10(c.bandwidth_hz) - 30.0) / 10.0),
        words="{text} {unit}", what="power density limit",
        description="v3: power density limit, dBm/Hz (the limit in the reference bandwidth B is this + 10 log10(B/Hz))",
    ),
    LimitForm(
        "field_uv_per_m", "field", "uv_per_m", "µV/m", relative=False, since=3,
        convert=lambda v, c: _field_w(20.0 * np.log10(v), c),
        words="{text} {unit}{at}", positive_unit="", what="field-strength limit",
        description="v3: field strength limit, µV/m at distance_m",
    ),
    LimitForm(
        "field_dbuv_per_m", "field", "dbuv_per_m", "dBµV/m", relative=False, since=3,
        convert=_field_w,
        words="{text} {unit}{at}", what="field-strength limit",
        description="v3: field strength limit, dBµV/m at distance_m",
    ),
    LimitForm(
        "psd_dbm", "psd", "power_dbm", "dBm", relative=False, since=5,
        convert=lambda v, c: 10.0 ** ((v + c.erp_gain_db - 30.0) / 10.0),
        words="peak power spectral density at most {text} {unit} in any reference bandwidth",
        fixed_words="peak power spectral density at most {value} in any reference bandwidth",
        what="peak power spectral density limit",
        description="v5: peak power spectral density, dBm in any reference bandwidth over the emission itself "
        "(an in-band region; 47 CFR 15.247(e))",
    ),
    *(
        LimitForm(
            key, "bandwidth", "frequency", "Hz", relative=False, since=5,
            convert=lambda v, c: v, measure="bandwidth",
            words=f"{{text}} {side}", positive_unit=" Hz", what=f"{word} bandwidth allowed",
            description=f"v5: the x-dB bandwidth of the emission (x = limit.drop_db) must be {side} this "
            f"(a bandwidth region; {rule})",
        )
        for key, side, word, rule in (("min_bandwidth_hz", "at least", "smallest", "47 CFR 15.247(a)(2)"),
                                      ("max_bandwidth_hz", "at most", "widest", "47 CFR 15.231(c)"))
    ),
)

#: The forms compared with the power in the reference bandwidth (every form but the bandwidth ones).
LEVEL_FORMS: tuple[LimitForm, ...] = tuple(f for f in LIMIT_FORMS if f.measure == "level")

#: The forms by key.
FORMS: dict[str, LimitForm] = {f.key: f for f in LIMIT_FORMS}

#: The keys of every form, in table order.
LIMIT_KEYS: tuple[str, ...] = tuple(FORMS)

#: The far-field relation in words, for the note a field-strength region carries.
FIELD_RELATION_TEXT = (
    f"E(dBµV/m) = EIRP(dBm) + {FAR_FIELD_CONSTANT_DB:.2f} - 20 log10(d/m) (far field, isotropic)"
)


def forms_of(kind: str) -> tuple[LimitForm, ...]:
    """The forms of one kind (``"level"``, ``"field"``, ...), in table order."""
    return tuple(f for f in LIMIT_FORMS if f.kind == kind)

