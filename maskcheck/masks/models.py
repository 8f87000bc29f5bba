"""The pydantic models of a mask file (``schema_version`` 1 to 5): the file and its top-level tables.

The provenance tables (the v1-4 table, the v5 checks and choices) are in
:mod:`maskcheck.masks.provenance_tables`.

Every table forbids unknown keys, so a misspelt key is an error, not a
silently ignored line.  The values inside are :class:`~maskcheck.masks.values.Value`
objects; the tables of a region are in :mod:`maskcheck.masks.regions`, and
which version introduced which key is :mod:`maskcheck.masks.versions`.  The
format in prose is ``docs/mask-format.md``; :mod:`maskcheck.masks.schema` is
the public entry.

References
----------
.. [1] TOML v1.0.0 specification (tables, arrays of tables).
.. [2] pydantic v2 documentation, "Models", "Validators" and "JSON Schema".
"""

from __future__ import annotations

import re
import typing
from typing import Literal

import numpy as np
from pydantic import BaseModel, ConfigDict, Field, PrivateAttr, StrictInt, field_validator, model_validator

from .._version import MASK_SCHEMA_VERSION
from ..core.result import MaskInfo
from ..core.units import format_frequency
from ._table import Table, problem
from .provenance_tables import PROVENANCE_TAGS, ChoiceEntry, Provenance, ProvenanceField, SourceCheckEntry
from .provenance import Grading, RuleProvenance, confirms_problem, grade_mask, value_words
from .regions import DETECTORS, DOMAIN_ANCHORS, OFFSET_ORIGINS, REGION_KINDS, Limit, Offset, ReferenceBand, Region
from .values import Condition, FixedFrequency, Frequency, Text
from .versions import unknown_keys_message

__all__ = [
    "REGION_KINDS",
    "DOMAIN_ANCHORS",
    "DETECTORS",
    "REFERENCE_POWER_KINDS",
    "OFFSET_ORIGINS",
    "Provenance",
    "SourceCheckEntry",
    "ChoiceEntry",
    "Applies",
    "ReferencePowerSpec",
    "Fundamental",
    "DomainsSpec",
    "Offset",
    "ReferenceBand",
    "Limit",
    "Region",
    "Mask",
    "BUILTIN_PREFIX",
    "keys_at",
]

#: What relative limits are taken below (v3 adds carrier, channel, dbsd, none).
REFERENCE_POWER_KINDS: tuple[str, ...] = ("mean", "pep", "carrier", "channel", "dbsd", "none")

#: How results name a file of the built-in library: ``builtin:<id>``.
BUILTIN_PREFIX = "builtin:"

_ID_PATTERN = re.compile(r"^[a-z0-9]+(?:-[a-z0-9]+)*$")
# First three classification symbols of an emission designator (RR Appendix 1 / 47 CFR 2.201).
_EMISSION_CLASS = re.compile(r"^[NAHRJBCFGDPKLMQVWX][0123789X][NABCDEFWX]$")


def _band_problem(value) -> str | None:
    """What is wrong with one carrier range ``[low, high]``, or None."""
    lo, hi = value[0].constant(), value[1].constant()
    if not (0 < lo < hi):
        return f"the carrier range {format_frequency(lo)} – {format_frequency(hi)} must have 0 < low < high"
    return None


class Applies(Table):
    """Which transmissions the mask is for.

    The carrier range is ``fundamental`` (one band) or, from schema v4,
    ``bands`` (several: a rule that covers 150-174 and 421-512 MHz does not
    cover 380 MHz).  A file gives one of the two; :attr:`carrier_bands`
    reads either.
    """

    # the schema file says it too: exactly one of the two keys
    model_config = ConfigDict(**Table.model_config, json_schema_extra={
        "oneOf": [{"required": ["fundamental"]}, {"required": ["bands"]}]})

    fundamental: tuple[FixedFrequency, FixedFrequency] | None = Field(
        None, description="carrier range [low, high], inclusive (give this or bands)"
    )
    bands: tuple[tuple[FixedFrequency, FixedFrequency], ...] | None = Field(
        None,
        description="v4: the carrier bands [[low, high], ...], each inclusive, in increasing order and not "
        "overlapping, for a rule that covers several bands (give this or fundamental)",
    )
    emission_classes: tuple[str, ...] = Field(
        (), description="first three classification symbols, e.g. 'J3E'; empty = any"
    )
    when: Condition | None = Field(
        None, description="v3: a condition on the station that must hold, e.g. 'power_w <= 10' (a power class)"
    )
    variant: str = Field(
        "", description="v3: which variant of the rule this file is, in words (e.g. an installation date)"
    )

    @field_validator("fundamental")
    @classmethod
    def _ordered(cls, value):
        wrong = None if value is None else _band_problem(value)
        if wrong:
            raise problem(wrong)
        return value

    @field_validator("bands")
    @classmethod
    def _bands(cls, value):
        if value is None:
            return value
        if not value:
            raise problem("give at least one band [low, high]")
        for i, band in enumerate(value):
            wrong = _band_problem(band)
            if wrong:
                raise problem(f"[{i}] {wrong}")
        for i in range(1, len(value)):
            prev_hi, lo = value[i - 1][1].constant(), value[i][0].constant()
            if not lo > prev_hi:
                raise problem(
                    f"[{i}] starts at {format_frequency(lo)}, not above the end of [{i - 1}] "
                    f"({format_frequency(prev_hi)}); expected bands in increasing order that do not overlap"
                )
        return value

    @model_validator(mode="after")
    def _one_range(self):
        if self.fundamental is None and self.bands is None:
            raise problem("give the carrier range: fundamental = [low, high], or (schema_version 4) "
                          "bands = [[low, high], ...]")
        if self.fundamental is not None and self.bands is not None:
            raise problem("give fundamental or bands, not both (bands lists every carrier band the rule covers)")
        return self

    @property
    def carrier_bands(self) -> tuple[tuple[float, float], ...]:
        """The carrier bands ``((low_hz, high_hz), ...)``, each inclusive, in increasing order."""
        pairs = self.bands if self.bands is not None else (self.fundamental,)
        return tuple((lo.constant(), hi.constant()) for lo, hi in pairs)

    @property
    def carrier_range(self) -> tuple[float, float]:
        """The lowest and the highest carrier of all the bands, Hz (the bands may leave gaps between)."""
        bands = self.carrier_bands
        return bands[0][0], bands[-1][1]

    @field_validator("emission_classes")
    @classmethod
    def _classes(cls, value):
        for i, item in enumerate(value):
            if not _EMISSION_CLASS.match(item):
                raise problem(
                    f"[{i}] {item!r} is not an emission class; expected the three classification "
                    "symbols of an emission designator, e.g. 'J3E', 'F3E', 'A1A'"
                )
        return value


class ReferencePowerSpec(Table):
    """The power relative limits are taken below."""

    kind: Literal["mean", "pep", "carrier", "channel", "dbsd", "none"] = Field(
        description="'mean', 'pep' (peak envelope power), v3: 'carrier' (unmodulated carrier), "
        "'channel' (total power in the channel bandwidth), 'dbsd' (highest power in any reference "
        "bandwidth inside the necessary band), 'none' (absolute limits only)"
    )
    bandwidth: Frequency | None = Field(None, description="for 'dbsd': the bandwidth of the 0 dBsd reference, e.g. '4 kHz'")
    note: str = Field("", description="v3: how the rule words its reference, for reports")

    @model_validator(mode="after")
    def _check(self):
        if self.kind == "dbsd":
            if self.bandwidth is None:
                raise problem("kind = 'dbsd' needs bandwidth (the reference bandwidth of 0 dBsd, e.g. '4 kHz')")
            if self.bandwidth.is_constant and not self.bandwidth.constant() > 0:
                raise problem(f"bandwidth must be > 0 Hz, found {self.bandwidth.text!r}")
        elif self.bandwidth is not None:
            raise problem(f"bandwidth belongs to kind = 'dbsd', not to kind = {self.kind!r}")
        return self


class Fundamental(Table):
    """How the checker treats the carrier itself."""

    exclusion: Frequency = Field(
        description="half-width around the carrier that spurious-region checks skip"
    )
    rationale: Text = Field(description="why this width")

    @field_validator("exclusion")
    @classmethod
    def _not_negative(cls, value):
        # the same rule the check applies (station_values.fundamental_exclusion_hz), so that 'masks validate'
        # refuses what 'check' would refuse
        if value.is_constant:
            v = value.constant()
            if not (np.isfinite(v) and v >= 0):
                raise problem(f"is {v:g} Hz; expected a half-width >= 0")
        return value


class DomainsSpec(Table):
    """Which out-of-band / spurious boundary rule the mask follows (v2)."""

    boundary: Literal["sm1539", "percent"] = Field(
        description="'sm1539' (ITU-R SM.1539: 250 % of Bn with its narrow/wide cases) or 'percent'"
    )
    percent: float | None = Field(None, description="for 'percent': the boundary's distance from the carrier, % of the bandwidth")
    of: Literal["necessary", "authorized"] | None = Field(None, description="for 'percent': which bandwidth")

    @model_validator(mode="after")
    def _check(self):
        if self.boundary == "percent":
            if self.percent is None or self.of is None:
                raise problem("boundary = 'percent' needs percent (e.g. 250) and of ('necessary' or 'authorized')")
            if not (np.isfinite(self.percent) and self.percent > 0):
                raise problem(f"percent must be a number > 0, found {self.percent!r}")
        elif self.percent is not None or self.of is not None:
            raise problem("percent and of belong to boundary = 'percent'; SM.1539 fixes its own boundary")
        return self


class Mask(Table):
    """One validated mask file (schema v1 to v5).

    :attr:`provenance` reads the provenance of either form: the table of
    schema 1-4 (``verified`` typed) or the list of checks of schema 5 (the
    grade derived, :attr:`grading`).

    Load it with :func:`maskcheck.masks.load_mask`; the loader records the
    file's name in the evidence, where it was read and its SHA-256
    (:attr:`path`, :attr:`source_path`, :attr:`sha256`).
    """

    schema_version: StrictInt = Field(description=f"format version; this release reads 1..{MASK_SCHEMA_VERSION}")
    id: str = Field(description="our own id: lowercase letters, digits and '-'")
    title: Text
    service: Text
    authority: Text | None = Field(None, description="v5: who makes the rule, e.g. 'FCC', 'ITU'")
    citation: Text | None = Field(None, description="v5: the clause, e.g. '47 CFR 97.307(d)'")
    measurement_note: str = Field("", description="v5: short note on how to measure")
    provenance_given: ProvenanceField = Field(
        alias="provenance",
        description="v1-4: a table (authority, citation, edition, verified); v5: the list of checks made "
        "([[provenance]] entries: source, edition, kind, confirms), from which the grade is derived")
    choice: tuple[ChoiceEntry, ...] = Field(
        (), description="v5: values the rule does not state, chosen by us, with the reason ([[choice]] entries)")
    applies: Applies
    reference_power: ReferencePowerSpec
    fundamental: Fundamental
    domains: DomainsSpec | None = Field(None, description="v2: the out-of-band / spurious boundary rule (default: SM.1539)")
    regions: tuple[Region, ...] = Field(min_length=1)

    _path: str = PrivateAttr("")
    _source: str = PrivateAttr("")
    _sha256: str = PrivateAttr("")
    _grading: Grading | None = PrivateAttr(None)

    @field_validator("schema_version")
    @classmethod
    def _version(cls, value):
        if value < 1:
            raise problem(f"schema_version must be >= 1, found {value}")
        if value > MASK_SCHEMA_VERSION:
            raise problem(
                f"schema_version {value} is newer than this maskcheck reads "
                f"(up to {MASK_SCHEMA_VERSION}); upgrade maskcheck"
            )
        return value

    @field_validator("id")
    @classmethod
    def _id(cls, value):
        if not _ID_PATTERN.match(value) or len(value) > 80:
            raise problem(
                f"{value!r} is not a mask id; expected lowercase letters, digits and single '-' "
                "(at most 80 characters), e.g. 'us-amateur-hf-2003'"
            )
        return value

    @model_validator(mode="after")
    def _versions(self):
        if self.reference_power.kind == "none":
            for i, r in enumerate(self.regions):
                if r.limit.attenuation_db is not None:
                    raise problem(
                        f"regions[{i}].limit.attenuation_db: reference_power.kind = 'none' has no reference to "
                        "attenuate below; give an absolute limit, or name the reference power"
                    )
        self._exclusion_over_the_range()
        message = unknown_keys_message(self)
        if message:
            raise problem(message)
        self._provenance_form()
        self._grading = grade_mask(self)
        return self

    def _provenance_form(self) -> None:
        """The provenance a file's version takes, and key paths that name values of this mask."""
        if isinstance(self.provenance_given, Provenance):
            if self.schema_version >= 5:
                raise problem("provenance: schema_version 5 takes the checks made, as [[provenance]] entries "
                              "(source, edition, kind, confirms), with authority and citation at the top level; "
                              "the grade (and verified) is derived from them, not typed")
            return
        missing = [k for k in ("authority", "citation") if getattr(self, k) is None]
        if missing:
            raise problem(f"{', '.join(missing)}: required at the top level with provenance as a list of checks, "
                          "e.g. authority = 'FCC', citation = '47 CFR 97.307(d)'")
        wrong = confirms_problem(self, self.provenance_given, self.choice)
        if wrong:
            raise problem(wrong)

    @property
    def source_checks(self) -> tuple[SourceCheckEntry, ...] | None:
        """The checks of a schema 5 file (None for a file of schema 1-4, which has a flag instead)."""
        return None if isinstance(self.provenance_given, Provenance) else self.provenance_given

    @property
    def provenance_table(self) -> Provenance | None:
        """The provenance table of a schema 1-4 file (None for schema 5)."""
        return self.provenance_given if isinstance(self.provenance_given, Provenance) else None

    @property
    def grading(self) -> Grading:
        """The grade of the rule data and what it rests on (:func:`maskcheck.masks.provenance.grade_mask`)."""
        if self._grading is None:
            self._grading = grade_mask(self)
        return self._grading

    @property
    def provenance(self) -> RuleProvenance:
        """Where the rule comes from and how far its values were checked, whatever the file's version."""
        table = self.provenance_table
        g = self.grading
        if table is not None:
            return RuleProvenance(table.authority, table.citation, table.edition, table.measurement_note, g)
        edition = "; ".join(f"{c.source}: {c.edition} ({c.kind})" for c in g.checks)
        return RuleProvenance(self.authority, self.citation, edition, self.measurement_note, g)

    def _exclusion_over_the_range(self) -> None:
        """An exclusion that depends on the carrier is evaluated across the carrier range: never below 0 Hz.

        Sampled at both ends of ``applies.fundamental`` and at 63 carriers spread evenly over log frequency
        between them (a piecewise expression with a negative piece narrower than that spacing can still slip
        through; the check refuses it then).  An exclusion that uses any other variable is left to the check.
        """
        value = self.fundamental.exclusion
        if value.is_constant or not value.names <= {"carrier_hz"}:
            return
        carriers = np.concatenate([np.geomspace(lo, hi, 65) for lo, hi in self.applies.carrier_bands])
        for fc in carriers:  # every band of a v4 file (applies.bands), not only applies.fundamental
            try:
                v = float(value.evaluate({"carrier_hz": float(fc)}))
            except (ValueError, ArithmeticError):
                continue  # the check names the failure of the expression itself
            if not (np.isfinite(v) and v >= 0):
                raise problem(f"fundamental.exclusion: is {v:g} Hz for a carrier of {format_frequency(float(fc))}; "
                              "expected a half-width >= 0 across the carrier range")

    @field_validator("regions")
    @classmethod
    def _unique_names(cls, regions):
        seen: dict[str, int] = {}
        for i, region in enumerate(regions):
            if region.name in seen:
                raise problem(f"[{i}] repeats the region name {region.name!r} of [{seen[region.name]}]")
            seen[region.name] = i
        return regions

    @property
    def path(self) -> str:
        """The mask file as results, reports and messages name it ('' if built in memory).

        A file of the built-in library is ``builtin:<id>`` (with the tool
        version and the SHA-256 it names one file, wherever maskcheck is
        installed); a user's file is the path as given (on the command line,
        or a mask folder as given joined with the file name), never resolved
        to an absolute path.
        """
        return self._path

    @property
    def source_path(self) -> str:
        """Where the bytes were read on this machine ('' if built in memory).

        For a user's file the same as :attr:`path`; for a built-in one the
        installed file.  Not for evidence: it depends on the install folder.
        """
        return self._source or self._path

    @property
    def builtin(self) -> bool:
        """Whether the mask is a file of the built-in library."""
        return self._path.startswith(BUILTIN_PREFIX)

    @property
    def sha256(self) -> str:
        """SHA-256 (hex) of the file's bytes ('' if built in memory)."""
        return self._sha256

    def region(self, name: str) -> Region:
        """The region called ``name``."""
        for region in self.regions:
            if region.name == name:
                return region
        raise KeyError(f"mask {self.id!r} has no region {name!r}; it has {[r.name for r in self.regions]}")

    def to_info(self, note: str = "") -> MaskInfo:
        """Provenance of this mask as the result object carries it."""
        p = self.provenance
        return MaskInfo(
            id=self.id,
            title=self.title,
            authority=p.authority,
            citation=p.citation,
            edition=p.edition,
            verified=p.verified,
            path=self.path,
            sha256=self.sha256,
            note=note,
            grade=p.grade,
            grade_text=p.grade_text,
            grade_summary=p.grading.summary,
            sources=p.grading.checks,
            unconfirmed_text=p.grading.unconfirmed_text,
            unconfirmed=tuple(value_words(v, self) for v in p.grading.unconfirmed),
        )


def _unwrap_model(annotation):
    """The pydantic model inside ``annotation`` (through Optional, tuple, list)."""
    if isinstance(annotation, type) and issubclass(annotation, BaseModel):
        return annotation
    for arg in typing.get_args(annotation):
        found = _unwrap_model(arg)
        if found is not None:
            return found
    return None


def keys_at(loc: tuple) -> list[str] | None:
    """The keys the table at TOML key path ``loc`` accepts (None if unknown)."""
    model = Mask
    for k, part in enumerate(loc):
        if isinstance(part, int) or (k == 1 and loc[0] == "provenance" and part in PROVENANCE_TAGS):
            continue
        if model is Mask and part == "provenance":
            checks = len(loc) > 1 and (isinstance(loc[1], int) or loc[1] == "checks")
            model = SourceCheckEntry if checks else Provenance
            continue
        info = model.model_fields.get(part)
        if info is None:
            return None
        inner = _unwrap_model(info.annotation)
        if inner is None:
            return None
        model = inner
    return [f.alias or name for name, f in model.model_fields.items()]

