"""The tables of one region of a mask file: where it lies, how it is measured, its limit.

:class:`Region` holds a range (absolute, on a domain, or by offsets:
:class:`Offset`), the reference bandwidths (:class:`ReferenceBand`) and the
:class:`Limit`, whose terms are declared by the table of limit forms
(:mod:`maskcheck.masks.limit_forms`).  :mod:`maskcheck.masks.models` puts
regions into a :class:`~maskcheck.masks.models.Mask`.
"""

from __future__ import annotations

from typing import Literal, Optional

import numpy as np
from pydantic import ConfigDict, Field, StrictBool, create_model, field_validator, model_validator

from ..core.units import format_frequency
from ._table import Table, problem, span_text
from .limit_forms import FORMS, LIMIT_FORMS, LIMIT_KEYS, forms_of
from .values import LIMIT_VARIABLES, Frequency, Text, Value, value_type

__all__ = [
    "REGION_KINDS",
    "DOMAIN_ANCHORS",
    "DETECTORS",
    "OFFSET_ORIGINS",
    "Offset",
    "ReferenceBand",
    "Limit",
    "Region",
]

#: Region kinds (``out-of-band`` and ``occupied-bandwidth`` from v2; ``in-band`` and ``bandwidth`` from v5).
REGION_KINDS: tuple[str, ...] = ("spurious", "out-of-band", "occupied-bandwidth", "in-band", "bandwidth")

#: What a region may be anchored on (v2): a domain of the emission.
DOMAIN_ANCHORS: tuple[str, ...] = ("spurious", "out-of-band", "necessary")

#: Detectors a region may call for ("any": the rule names none).
DETECTORS: tuple[str, ...] = ("rms", "average", "peak", "quasi-peak", "any")

#: Where offsets (and the displacement frequency fd) are measured from (v3).
OFFSET_ORIGINS: tuple[str, ...] = ("carrier", "authorized-edge", "necessary-edge")


class Offset(Table):
    """A region as offsets from the carrier, on both sides (v2).

    The region holds the frequencies more than ``from`` and up to and
    including ``to`` away from the carrier.  Give ``from``/``to`` as
    frequencies, or ``from_percent``/``to_percent`` with ``of``.
    """

    model_config = ConfigDict(extra="forbid", frozen=True, str_strip_whitespace=True, populate_by_name=True)

    from_: Frequency | None = Field(None, alias="from", description="inner offset from the origin")
    to: Frequency | None = Field(None, description="outer offset from the origin (v3: omit it for 'beyond from')")
    from_percent: float | None = Field(None, description="inner offset, % of the bandwidth named by 'of'")
    to_percent: float | None = Field(None, description="outer offset, % of the bandwidth named by 'of' (v3: may be omitted)")
    of: Literal["necessary", "authorized"] | None = Field(None, description="for percentages: which bandwidth")
    origin: Literal["carrier", "authorized-edge", "necessary-edge"] = Field(
        "carrier", description="v3: offsets (and fd) from the carrier, or from the edge of the authorised / necessary bandwidth"
    )
    include_from: StrictBool = Field(False, description="v3: the inner boundary belongs to the region (default: 'more than from')")
    include_to: StrictBool = Field(True, description="v3: the outer boundary belongs to the region (default: 'up to and including to')")

    @property
    def unbounded(self) -> bool:
        """True for a region 'beyond' its inner offset (no outer offset)."""
        return self.to is None and self.to_percent is None

    @model_validator(mode="after")
    def _check(self):
        hz = self.from_ is not None or self.to is not None
        pct = self.from_percent is not None or self.to_percent is not None
        if hz and pct:
            raise problem("give from/to (frequencies) or from_percent/to_percent, not both")
        if hz:
            if self.from_ is None:
                raise problem("give from (and to, unless the region lies beyond from)")
            if self.of is not None:
                raise problem("of belongs to from_percent/to_percent")
            if self.from_.is_constant and self.from_.constant() < 0:
                raise problem(f"expected from >= 0, found {self.from_.text!r}")
            if self.to is not None and self.from_.is_constant and self.to.is_constant and not 0 <= self.from_.constant() < self.to.constant():
                raise problem(f"expected 0 <= from < to, found {self.from_.text!r} and {self.to.text!r}")
        elif pct:
            if self.from_percent is None or self.of is None:
                raise problem("give from_percent, to_percent and of ('necessary' or 'authorized')")
            if not np.isfinite(self.from_percent) or self.from_percent < 0:
                raise problem(f"expected from_percent >= 0, found {self.from_percent!r}")
            if self.to_percent is not None and not (np.isfinite(self.to_percent) and self.from_percent < self.to_percent):
                raise problem(f"expected 0 <= from_percent < to_percent, found {self.from_percent!r} and {self.to_percent!r}")
        else:
            raise problem("give from and to, or from_percent, to_percent and of")
        return self


class ReferenceBand(Table):
    """The reference bandwidth the limit is stated in, over one frequency range."""

    start: Frequency | None = Field(None, description="from (v3: omit start and stop for the whole region)")
    stop: Frequency | None = None
    bandwidth: Frequency
    narrower_rbw: Literal["integrate", "refuse"] = Field(
        "integrate",
        description="v3: a narrower RBW may be used and integrated over the bandwidth ('integrate', the usual "
        "allowance), or the rule asks for this bandwidth itself ('refuse': a narrower RBW leaves the region incomplete)",
    )

    @property
    def whole_region(self) -> bool:
        """True when the band has no start/stop and covers its whole region."""
        return self.start is None and self.stop is None

    @model_validator(mode="after")
    def _check(self):
        if (self.start is None) != (self.stop is None):
            raise problem("give both start and stop, or neither (v3: the bandwidth then covers the whole region)")
        if self.start is not None and self.start.is_constant and self.stop.is_constant:
            if not self.start.constant() < self.stop.constant():
                raise problem(f"start must be below stop, found {span_text(self.start, self.stop)}")
        if self.bandwidth.is_constant and not self.bandwidth.constant() > 0:
            raise problem(f"bandwidth must be > 0 Hz, found {self.bandwidth.text!r}")
        return self




def _term_fields() -> dict:
    """One optional field per limit form, typed by its value family (the table decides)."""
    fields = {}
    for form in LIMIT_FORMS:
        kind = Optional[value_type(form.family, form.what, LIMIT_VARIABLES)]
        fields[form.key] = (kind, Field(None, description=form.description) if form.description else None)
    return fields


#: the limit terms, one per form of :data:`~maskcheck.masks.limit_forms.LIMIT_FORMS`
_LimitTerms = create_model("_LimitTerms", __base__=Table, **_term_fields())


class Limit(_LimitTerms):
    """The limit of a region: one or more terms (attenuation, level, density, field strength); all must hold unless combine says otherwise."""

    distance_m: float | None = Field(None, description="v3: the measurement distance of a field-strength limit, m")
    quantity: Literal["conducted", "eirp", "erp"] = Field(
        "conducted", description="v3: what the absolute level is: power at the antenna port, or EIRP / ERP"
    )
    combine: Literal["all", "least-stringent"] = Field(
        "all", description="v3: several limit terms: all must hold (the strictest decides) or the least stringent one does"
    )
    bandwidth: Frequency | None = Field(
        None, description="occupied-bandwidth regions (v2): the widest occupied bandwidth allowed"
    )
    drop_db: float | None = Field(
        None, description="v5: with min_bandwidth_hz, the x of the x-dB bandwidth, dB below the highest reading (6 for 47 CFR 15.247(a)(2))"
    )
    description: str | None = Field(None, description="how a report words the limit")

    @property
    def terms(self) -> list[str]:
        """The limit keys given, in the order of the table of limit forms."""
        return [k for k in LIMIT_KEYS if getattr(self, k) is not None]

    @model_validator(mode="after")
    def _check(self):
        terms = self.terms
        if self.bandwidth is not None:
            if terms:
                raise problem("bandwidth (an occupied-bandwidth limit) goes alone, without attenuation_db or a level")
            if self.bandwidth.is_constant and not self.bandwidth.constant() > 0:
                raise problem(f"bandwidth must be > 0 Hz, found {self.bandwidth.text!r}")
            return self
        if not terms:
            raise problem("give attenuation_db, level_w or level_dbm (none found)")
        width_terms = [t for t in terms if FORMS[t].measure == "bandwidth"]
        if bool(width_terms) != (self.drop_db is not None):
            raise problem("min_bandwidth_hz or max_bandwidth_hz (an x-dB bandwidth) needs drop_db (the x, dB), and drop_db needs one")
        if self.drop_db is not None and not (np.isfinite(self.drop_db) and self.drop_db > 0):
            raise problem(f"drop_db must be > 0 dB, found {self.drop_db!r}")
        for alone in ("min_bandwidth_hz", "max_bandwidth_hz", "psd_dbm"):
            if alone in terms and len(terms) > 1:
                raise problem(f"{alone} goes alone in its limit (found also {', '.join(t for t in terms if t != alone)})")
        _one_of(self, "level", lambda keys, given: f"give one of {', '.join(keys)}, not {' and '.join(given)}")
        _one_of(self, "field", lambda keys, given: f"give {' or '.join(keys)}, not both")
        field = any(getattr(self, f.key) is not None for f in forms_of("field"))
        if field != (self.distance_m is not None):
            raise problem("a field-strength limit needs distance_m (the measurement distance), and distance_m needs one")
        if self.distance_m is not None and not (np.isfinite(self.distance_m) and self.distance_m > 0):
            raise problem(f"distance_m must be > 0, found {self.distance_m!r}")
        if field and self.quantity == "erp":
            raise problem("a field-strength limit converts to EIRP; quantity = 'erp' does not go with it")
        for form in LIMIT_FORMS:
            value = getattr(self, form.key)
            if form.positive_unit is not None and value is not None and value.is_constant and not value.constant() > 0:
                raise problem(f"{form.key} must be > 0{form.positive_unit}, found {value.text!r}")
        if "combine" in self.model_fields_set and len(terms) < 2:
            raise problem("combine says how several limit terms combine; this limit has one")
        return self

    @property
    def level(self) -> Value | None:
        """The absolute level, whichever key gave it."""
        for form in forms_of("level"):
            value = getattr(self, form.key)
            if value is not None:
                return value
        return None


def _one_of(limit, kind: str, message) -> None:
    """At most one term of a kind (one level, one field strength)."""
    keys = [f.key for f in forms_of(kind)]
    given = [k for k in keys if getattr(limit, k) is not None]
    if len(given) > 1:
        raise problem(message(keys, given))


class Region(Table):
    """A frequency range with one limit, detector and reference bandwidths."""

    name: Text
    kind: Literal["spurious", "out-of-band", "occupied-bandwidth", "in-band", "bandwidth"] = Field(
        description="what the region judges; v5 adds 'in-band' (the emission itself, nothing skipped) and 'bandwidth' "
        "(a smallest x-dB bandwidth)"
    )
    domain: Literal["spurious", "out-of-band", "necessary"] | None = Field(
        None, description="v2: anchor the region on a domain of the emission"
    )
    offset: Offset | None = Field(None, description="v2: the region as offsets from the carrier")
    start: Frequency | None = None
    stop: Frequency | None = None
    include_start: StrictBool = Field(True, description="v3: start belongs to the region")
    include_stop: StrictBool = Field(True, description="v3: stop belongs to the region")
    may_be_empty: StrictBool = Field(
        False, description="v3: a region whose start is not below its stop for a station lies outside the search range and is left out"
    )
    detector: Literal["rms", "average", "peak", "quasi-peak", "any"] | None = Field(
        None, description="what the rule calls for; 'quasi-peak' (v3) is judged on a peak trace (conservative)"
    )
    within: Text | None = Field(
        None, description="v5: the region applies only inside the bands of this band table (masks/tables/<name>.toml), "
        "e.g. 'us-15205-restricted-bands'"
    )
    limit: Limit
    reference_bandwidth: tuple[ReferenceBand, ...] = ()

    @model_validator(mode="after")
    def _shape(self):
        where = (self.start is not None) + (self.stop is not None)
        bandwidth_term = any(FORMS[t].measure == "bandwidth" for t in self.limit.terms)
        if self.kind == "bandwidth":
            if not bandwidth_term:
                raise problem("a bandwidth region needs limit.min_bandwidth_hz or limit.max_bandwidth_hz, and limit.drop_db")
            if where or self.domain or self.offset or self.within or self.detector:
                raise problem("a bandwidth region takes only name, kind, limit and reference_bandwidth (the widest RBW allowed)")
            if len(self.reference_bandwidth) != 1 or not self.reference_bandwidth[0].whole_region:
                raise problem("a bandwidth region needs one reference_bandwidth without start/stop: the widest "
                              "resolution bandwidth the width may be measured with")
            return self
        if bandwidth_term:
            raise problem(f"min_bandwidth_hz and max_bandwidth_hz belong to bandwidth regions, not to kind {self.kind!r}")
        if "psd_dbm" in self.limit.terms and self.kind != "in-band":
            raise problem(f"psd_dbm (a peak power spectral density over the emission) belongs to in-band regions, not to kind {self.kind!r}")
        if self.kind == "in-band" and self.domain is not None:
            raise problem("an in-band region is given by start/stop or by an offset, not by a domain")
        if self.kind == "occupied-bandwidth":
            if self.limit.bandwidth is None:
                raise problem("an occupied-bandwidth region needs limit.bandwidth (the widest bandwidth allowed)")
            if where or self.domain or self.offset or self.reference_bandwidth or self.within:
                raise problem("an occupied-bandwidth region takes only name, kind and limit.bandwidth")
            return self
        if self.limit.bandwidth is not None:
            raise problem(f"limit.bandwidth belongs to occupied-bandwidth regions, not to kind {self.kind!r}")
        if self.detector is None:
            raise problem("detector is missing; expected rms, average, peak or any")
        if not self.reference_bandwidth:
            raise problem("reference_bandwidth is missing; give at least one [[regions.reference_bandwidth]] table")
        if self.domain is not None and self.offset is not None:
            raise problem("anchor a region on a domain or on offsets, not both")
        if self.domain in ("out-of-band", "necessary"):
            if where:
                raise problem("start/stop do not go with a domain other than 'spurious' (the anchor sets the range)")
        elif self.offset is not None:
            if where == 1:
                raise problem("give both start and stop (the search range), or neither")
            if self.offset.unbounded and where != 2:
                raise problem("a region beyond an offset (no 'to') needs start and stop: the search range")
        elif where != 2:
            what = "the spurious domain's search range" if self.domain == "spurious" else "the frequency range"
            raise problem(f"give start and stop ({what})")
        if self.kind == "spurious" and self.domain in ("out-of-band", "necessary"):
            raise problem(f"a spurious region cannot be anchored on the {self.domain} domain")
        return self

    @field_validator("stop")
    @classmethod
    def _after_start(cls, stop, info):
        start = info.data.get("start")
        if stop is not None and start is not None and start.is_constant and stop.is_constant:
            if not start.constant() < stop.constant():
                raise problem(f"stop must be above start, found {span_text(start, stop)}")
        return stop

    @field_validator("reference_bandwidth")
    @classmethod
    def _no_overlap(cls, bands):
        if any(b.whole_region for b in bands) and len(bands) > 1:
            raise problem("a reference bandwidth without start/stop covers the whole region; it goes alone")
        fixed = [
            (b.start.constant(), b.stop.constant(), i)
            for i, b in enumerate(bands)
            if not b.whole_region and b.start.is_constant and b.stop.is_constant
        ]
        fixed.sort()
        for (a0, a1, i), (b0, b1, j) in zip(fixed, fixed[1:]):
            if b0 < a1:
                raise problem(
                    f"[{j}] ({format_frequency(b0)} – {format_frequency(b1)}) overlaps "
                    f"[{i}] ({format_frequency(a0)} – {format_frequency(a1)}); "
                    "reference-bandwidth ranges may touch but not overlap"
                )
        return bands
