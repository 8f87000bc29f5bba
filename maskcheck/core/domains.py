"""The necessary band, the out-of-band domain and the spurious domain.

Around a carrier ``fc`` with necessary bandwidth ``Bn``:

* the **necessary band** is ``fc +- Bn/2``;
* the **out-of-band domain** runs from ``+- Bn/2`` to the boundary;
* the **spurious domain** lies beyond the boundary.

Where the boundary lies is a rule of its own, and each mask names the one it
follows (:data:`BOUNDARY_RULES`):

``"sm1539"``
    ITU-R SM.1539: normally 250 % of Bn from the centre (+- 2.5 Bn); for a
    narrow emission (Bn < B_L) +- 2.5 B_L; for a wide one (Bn > B_U)
    +- (1.5 Bn + B_U).  B_L and B_U depend on the carrier frequency
    (:data:`SM1539_TABLE`).  **That table was written from memory and has not
    been checked against the text** (:data:`SM1539_TABLE_VERIFIED` is False);
    every result that uses an exception says so.
``"percent"``
    A plain percentage (often 250 %) of a bandwidth the rule names, the
    necessary or the authorised one, measured from the carrier, as many
    national rules do.

=========================  ==================================================
``domain_boundary``        the boundary offset for one emission under a rule
``sm1539_boundary``        the SM.1539 boundary with its narrow/wide cases
``percent_boundary``       a percentage of a bandwidth
``Domains``                the boundary and the three domains of one emission
``SM1539_TABLE``           B_L and B_U by carrier range (data, unverified)
=========================  ==================================================

References
----------
.. [1] ITU-R SM.1539, "Variation of the boundary between the out-of-band and
   spurious domains required for the application of Recommendations ITU-R
   SM.1541 and ITU-R SM.329" (the 250 % rule; Table 1 for narrow-band and
   wideband systems).
.. [2] ITU Radio Regulations, No. 1.144 and 1.145 (out-of-band and spurious
   emissions), Appendix 3.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from ..errors import StationError, format_value

__all__ = [
    "BOUNDARY_RULES",
    "NORMAL_PERCENT",
    "SM1539_TABLE",
    "SM1539_TABLE_VERIFIED",
    "SM1539_TABLE_NOTE",
    "Sm1539Row",
    "Boundary",
    "DomainSpan",
    "Domains",
    "sm1539_row",
    "sm1539_boundary",
    "percent_boundary",
    "domain_boundary",
    "domains",
]

#: boundary rules a mask may name
BOUNDARY_RULES = ("sm1539", "percent")

#: the normal boundary, percent of the necessary bandwidth from the centre
NORMAL_PERCENT = 250.0


@dataclass(frozen=True)
class Sm1539Row:
    """One carrier range of the SM.1539 table: ``low_hz <= fc < high_hz``."""

    low_hz: float
    high_hz: float
    b_l_hz: float
    b_u_hz: float


#: B_L and B_U of ITU-R SM.1539 Table 1 by carrier range.  From memory
#: (fact sheet 5.4, MEMORY, medium confidence): not checked against the text.
SM1539_TABLE: tuple[Sm1539Row, ...] = (
    Sm1539Row(9e3, 150e3, 250.0, 10e3),
    Sm1539Row(150e3, 30e6, 4e3, 100e3),
    Sm1539Row(30e6, 1e9, 25e3, 10e6),
    Sm1539Row(1e9, 3e9, 100e3, 50e6),
    Sm1539Row(3e9, 10e9, 100e3, 100e6),
    Sm1539Row(10e9, 15e9, 300e3, 250e6),
    Sm1539Row(15e9, 26e9, 500e3, 500e6),
    Sm1539Row(26e9, math.inf, 1e6, 500e6),
)

#: whether SM1539_TABLE was checked against the official text
SM1539_TABLE_VERIFIED = False

#: the caution shown wherever a value of the table is applied
SM1539_TABLE_NOTE = "the ITU-R SM.1539 B_L/B_U table is from memory, not checked against the text (verified = false)"


@dataclass(frozen=True)
class Boundary:
    """The out-of-band / spurious boundary of one emission.

    Attributes
    ----------
    offset_hz : float
        Distance of the boundary from the carrier, Hz (both sides).
    rule : str
        ``"sm1539"`` or ``"percent"``.
    case : str
        ``"normal"`` (2.5 Bn), ``"narrowband"`` (2.5 B_L), ``"wideband"``
        (1.5 Bn + B_U), or ``"percent"``.
    text : str
        How the offset was found, with the numbers.
    verified : bool
        False when a value from the unverified SM.1539 table decided it.
    """

    offset_hz: float
    rule: str
    case: str
    text: str
    verified: bool = True

    def to_dict(self) -> dict:
        return {"offset_hz": self.offset_hz, "rule": self.rule, "case": self.case, "text": self.text, "verified": self.verified}


def _positive(name: str, value, where: str | None = None) -> float:
    """``value`` as a finite float > 0; errors name the parameter ``name`` (or the key ``where`` of a mask file)."""
    param = name if where is None else None
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise StationError(f"{name}={value!r} is not a number", where=where, param=param) from None
    if not (math.isfinite(v) and v > 0):
        raise StationError(f"{name}={format_value(value)} must be a finite number > 0", where=where, param=param)
    return v


def sm1539_row(carrier_hz: float) -> Sm1539Row | None:
    """The SM.1539 table row for a carrier (None below 9 kHz)."""
    fc = _positive("carrier_hz", carrier_hz)
    for row in SM1539_TABLE:
        if row.low_hz <= fc < row.high_hz:
            return row
    return None


def _khz(x: float) -> str:
    for unit, name in ((1e9, "GHz"), (1e6, "MHz"), (1e3, "kHz")):
        if abs(x) >= unit:
            return f"{x / unit:.6g} {name}"
    return f"{x:.6g} Hz"


def sm1539_boundary(carrier_hz: float, necessary_bw_hz: float) -> Boundary:
    """The boundary under ITU-R SM.1539, with its narrow-band and wideband cases.

    Parameters
    ----------
    carrier_hz : float
        Centre frequency of the emission, Hz.
    necessary_bw_hz : float
        Bn, Hz.

    Returns
    -------
    Boundary

    Examples
    --------
    >>> sm1539_boundary(98e6, 180e3).offset_hz        # normal: 2.5 Bn
    450000.0
    >>> sm1539_boundary(450e6, 16e3).offset_hz        # Bn < B_L = 25 kHz: 2.5 B_L
    62500.0
    """
    fc = _positive("carrier_hz", carrier_hz)
    bn = _positive("necessary_bw_hz", necessary_bw_hz)
    normal = NORMAL_PERCENT / 100.0 * bn
    row = sm1539_row(fc)
    if row is None:
        return Boundary(normal, "sm1539", "normal", f"250 % of Bn = 2.5 x {_khz(bn)} = {_khz(normal)} (no SM.1539 row below 9 kHz)", True)
    span = f"{_khz(row.low_hz)} to {_khz(row.high_hz)}" if math.isfinite(row.high_hz) else f"above {_khz(row.low_hz)}"
    if bn < row.b_l_hz:
        off = 2.5 * row.b_l_hz
        return Boundary(off, "sm1539", "narrowband", f"Bn {_khz(bn)} < B_L {_khz(row.b_l_hz)} (carriers {span}): 2.5 x B_L = {_khz(off)}", SM1539_TABLE_VERIFIED)
    if bn > row.b_u_hz:
        off = 1.5 * bn + row.b_u_hz
        return Boundary(off, "sm1539", "wideband", f"Bn {_khz(bn)} > B_U {_khz(row.b_u_hz)} (carriers {span}): 1.5 x Bn + B_U = {_khz(off)}", SM1539_TABLE_VERIFIED)
    # the table decides that neither exception applies, so it still matters
    return Boundary(normal, "sm1539", "normal", f"250 % of Bn = 2.5 x {_khz(bn)} = {_khz(normal)} (B_L {_khz(row.b_l_hz)} <= Bn <= B_U {_khz(row.b_u_hz)})", SM1539_TABLE_VERIFIED)


def percent_boundary(bandwidth_hz: float, percent: float = NORMAL_PERCENT, *, of: str = "necessary") -> Boundary:
    """A boundary at ``percent`` % of a bandwidth from the carrier.

    Examples
    --------
    >>> percent_boundary(16e3, 250.0, of="authorized").offset_hz
    40000.0
    """
    b = _positive("authorized_bw_hz" if of == "authorized" else "necessary_bw_hz", bandwidth_hz)
    p = _positive("percent", percent, "domains.percent")
    off = p / 100.0 * b
    return Boundary(off, "percent", "percent", f"{p:g} % of the {of} bandwidth {_khz(b)} = {_khz(off)}", True)


def domain_boundary(
    carrier_hz: float,
    necessary_bw_hz: float,
    *,
    rule: str = "sm1539",
    percent: float = NORMAL_PERCENT,
    of: str = "necessary",
    authorized_bw_hz: float | None = None,
) -> Boundary:
    """The boundary for one emission under the rule a mask names.

    Parameters
    ----------
    carrier_hz, necessary_bw_hz : float
        Hz.
    rule : {"sm1539", "percent"}
    percent : float
        For ``"percent"``: the percentage (250 by default).
    of : {"necessary", "authorized"}
        For ``"percent"``: which bandwidth the percentage is of.
    authorized_bw_hz : float, optional
        Needed when ``of = "authorized"``.

    Examples
    --------
    >>> domain_boundary(7.1e6, 2.7e3).offset_hz
    10000.0
    """
    if rule == "sm1539":
        return sm1539_boundary(carrier_hz, necessary_bw_hz)
    if rule != "percent":
        raise StationError(f"boundary rule {rule!r} is not one of {BOUNDARY_RULES}", where="domains.boundary")
    if of == "necessary":
        return percent_boundary(necessary_bw_hz, percent, of="necessary")
    if of == "authorized":
        if authorized_bw_hz is None:
            raise StationError(
                f"the mask puts the domain boundary at {percent:g} % of the authorised bandwidth; give it (authorized_bw_hz)",
                param="authorized_bw_hz",
            )
        return percent_boundary(authorized_bw_hz, percent, of="authorized")
    raise StationError(f"domains.of {of!r} is not 'necessary' or 'authorized'", where="domains.of")


@dataclass(frozen=True)
class DomainSpan:
    """One frequency span of a domain (``name``, ``start_hz``, ``stop_hz``)."""

    name: str
    start_hz: float
    stop_hz: float

    def to_dict(self) -> dict:
        return {"name": self.name, "start_hz": self.start_hz, "stop_hz": self.stop_hz}


@dataclass(frozen=True)
class Domains:
    """The boundary and the domains of one emission.

    Attributes
    ----------
    carrier_hz, necessary_bw_hz : float
    boundary : Boundary
    notes : tuple of str
    """

    carrier_hz: float
    necessary_bw_hz: float
    boundary: Boundary
    notes: tuple[str, ...] = field(default_factory=tuple)

    @property
    def necessary_band_hz(self) -> tuple[float, float]:
        h = self.necessary_bw_hz / 2.0
        return (self.carrier_hz - h, self.carrier_hz + h)

    @property
    def boundary_hz(self) -> tuple[float, float]:
        """The two boundary frequencies (lower, upper), Hz."""
        return (self.carrier_hz - self.boundary.offset_hz, self.carrier_hz + self.boundary.offset_hz)

    def spans(self, low_hz: float = 0.0, high_hz: float | None = None) -> list[DomainSpan]:
        """The domains as spans, the spurious domain cut to ``[low_hz, high_hz]``.

        The spurious domain has no natural upper end: ``high_hz`` defaults to
        twice the carrier frequency.
        """
        n0, n1 = self.necessary_band_hz
        b0, b1 = self.boundary_hz
        top = high_hz if high_hz is not None else 2.0 * self.carrier_hz
        out = []
        if b0 > low_hz:
            out.append(DomainSpan("spurious domain (below)", float(max(low_hz, 0.0)), float(b0)))
        out += [
            DomainSpan("out-of-band domain (below)", float(max(b0, 0.0)), float(n0)),
            DomainSpan("necessary band", float(n0), float(n1)),
            DomainSpan("out-of-band domain (above)", float(n1), float(b1)),
        ]
        if top > b1:
            out.append(DomainSpan("spurious domain (above)", float(b1), float(top)))
        return out


def domains(
    carrier_hz: float,
    necessary_bw_hz: float,
    *,
    rule: str = "sm1539",
    percent: float = NORMAL_PERCENT,
    of: str = "necessary",
    authorized_bw_hz: float | None = None,
) -> Domains:
    """The domains of one emission (see :func:`domain_boundary` for the arguments).

    The boundary is never put inside the necessary band: if a percentage
    rule would do that (a percentage under 50 % of Bn), the necessary band's
    edge is used and the notes say so.

    Examples
    --------
    >>> d = domains(7.1e6, 2.7e3)
    >>> d.boundary.case, d.boundary_hz
    ('narrowband', (7090000.0, 7110000.0))
    """
    fc = _positive("carrier_hz", carrier_hz)
    bn = _positive("necessary_bw_hz", necessary_bw_hz)
    b = domain_boundary(fc, bn, rule=rule, percent=percent, of=of, authorized_bw_hz=authorized_bw_hz)
    notes = []
    if b.offset_hz < bn / 2.0:
        notes.append(f"the boundary ({_khz(b.offset_hz)}) would lie inside the necessary band; its edge ({_khz(bn / 2)}) is used")
        b = Boundary(bn / 2.0, b.rule, b.case, b.text + f"; raised to Bn/2 = {_khz(bn / 2)}", b.verified)
    if b.offset_hz >= fc:
        notes.append(f"the boundary offset ({_khz(b.offset_hz)}) reaches 0 Hz: there is no spurious domain below the carrier")
    if not b.verified:
        notes.append(SM1539_TABLE_NOTE)
    return Domains(fc, bn, b, tuple(notes))
