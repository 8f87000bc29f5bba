"""The campaign file's schema: pydantic tables of the TOML (structure only; units are read in :mod:`.file`).

One table of settings (:class:`Settings`) is shared by ``[defaults]``, every
``[[entry]]``, every ``[[matrix]]`` and every value of a matrix axis, so a
setting means the same wherever it is written and the nearest one wins
(axis value > matrix or entry > defaults).
"""

from __future__ import annotations

from typing import Literal

from pydantic import BaseModel, ConfigDict, Field, StrictBool, StrictFloat, StrictInt, StrictStr

__all__ = ["CAMPAIGN_VERSION", "Quantity", "Settings", "EntryTable", "AxisValue", "MatrixTable", "CampaignFile",
           "SETTING_KINDS", "OUTPUT_KINDS"]

#: the newest campaign-file version this release reads
CAMPAIGN_VERSION = 1

#: a quantity as people type it: a string with a unit ("7.1 MHz") or a bare number in the SI unit
Quantity = StrictStr | StrictFloat | StrictInt

#: what each entry can write: the result JSON, the PDF report, the margins CSV (as ``maskcheck check`` writes them)
#: and the judged spectrum as trace files (what ``maskcheck compare`` overlays)
OUTPUT_KINDS = ("json", "pdf", "csv", "spectrum")

#: how each quantity setting is read (:mod:`.file`): its unit family and the SI unit of a bare number
SETTING_KINDS = {
    "carrier": ("frequency", "Hz"), "exclude": ("frequency", "Hz"), "rbw": ("frequency", "Hz"),
    "power": ("power", "W"), "pep": ("power", "W"), "full_scale": ("power", "W"),
    "guard": ("db", None), "list_within": ("db", None), "xdb": ("db", None), "power_tolerance": ("db", None),
    "attenuator": ("db", None),
    "authorized_bw": ("frequency|necessary", "Hz"), "necessary_bw": ("frequency|measured", "Hz"),
}


class _Model(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


class Settings(_Model):
    """What a check of one entry is told: mask, setup, station values, trace description, outputs."""

    mask: StrictStr | None = None
    mask_dirs: list[StrictStr] | None = None
    setup: StrictStr | None = None
    attenuator: Quantity | None = None
    guard: Quantity | None = None
    list_within: Quantity | None = None
    xdb: Quantity | None = None
    power_tolerance: Quantity | None = None
    carrier: Quantity | None = None
    exclude: Quantity | None = None
    power: Quantity | None = None
    pep: Quantity | None = None
    designator: StrictStr | None = None
    sideband: Literal["upper", "lower"] | None = None
    authorized_bw: Quantity | None = None
    necessary_bw: Quantity | None = None
    outside_bands: StrictBool | None = None
    rbw: Quantity | None = None
    detector: Literal["rms", "average", "peak", "sample", "quasi-peak"] | None = None
    freq_unit: Literal["hz", "khz", "mhz", "ghz"] | None = None
    level_unit: Literal["dbm", "dbw", "dbuv", "w", "mw"] | None = None
    full_scale: Quantity | None = None
    outputs: list[Literal["json", "pdf", "csv", "spectrum"]] | None = None


class _Inputs(Settings):
    """Settings plus the inputs of an entry (exactly one kind of input)."""

    traces: list[StrictStr] | None = None
    recordings: list[StrictStr] | None = None
    scenario: StrictStr | None = None


class EntryTable(_Inputs):
    """One ``[[entry]]``: a name, its inputs, and settings that override the defaults."""

    name: StrictStr


class AxisValue(Settings):
    """One value of a matrix axis: the label that goes into names and file patterns, and its settings."""

    label: StrictStr


class MatrixTable(_Inputs):
    """One ``[[matrix]]``: axes expanded into every combination; ``name`` and the inputs are patterns."""

    name: StrictStr
    axis: dict[StrictStr, list[AxisValue | StrictStr]] = Field(min_length=1)


class CampaignFile(_Model):
    """The whole file."""

    campaign_version: Literal[1]
    name: StrictStr
    description: StrictStr = ""
    defaults: Settings = Settings()
    entry: list[EntryTable] = []
    matrix: list[MatrixTable] = []
