"""The mask-file format (``schema_version`` 1 to 5) as pydantic models.

A mask file is TOML; :mod:`maskcheck.masks.library` reads it and validates it
with :class:`Mask`.  Every table forbids unknown keys, so a misspelt key is an
error, not a silently ignored line.  The prose description for people who
write masks is ``docs/mask-format.md``; :func:`mask_json_schema` gives the same
structure as JSON Schema, and the package ships it as a versioned file
(:func:`shipped_json_schema`, ``maskcheck/schema/mask-schema-v<N>.json``, N = MASK_SCHEMA_VERSION).

This module is the public entry of the format; the parts live in

===================================  =================================================
:mod:`maskcheck.masks.values`        the values people type (:class:`Value`)
:mod:`maskcheck.masks.limit_forms`   the forms a limit takes, one table
:mod:`maskcheck.masks.versions`      which schema version introduced which key
:mod:`maskcheck.masks.models`        the pydantic models of the tables
===================================  =================================================

Values that people type
-----------------------
Frequencies, powers and attenuations are :class:`Value` objects.  A file may
give each one as

* a number in SI units (Hz, W, dB, dBm): ``start = 9000``;
* a quantity string: ``start = "9 kHz"``, ``level_w = "50 mW"``,
  ``attenuation_db = "43 dB"``;
* an expression (see :mod:`maskcheck.masks.expr`) in the same SI unit, using
  the variables of :data:`VARIABLES`: ``stop = "min(10 * carrier_hz, 40e9)"``.

Version 2 adds the ``[domains]`` table (which out-of-band / spurious
boundary rule the mask follows), region kinds ``out-of-band`` and
``occupied-bandwidth``, regions anchored on a domain (``domain = ...``) or on
offsets from the carrier (``[regions.offset]``, in Hz or as a percentage of
the necessary or authorised bandwidth), and the variables
``necessary_bw_hz`` and ``authorized_bw_hz``.  Version-1 files load
unchanged.

Version 3 grows the language so that real rule sets can be written down:

* **where**: ``[regions.offset]`` measured from the carrier or from the edge
  of the authorised or necessary bandwidth (``origin``), open ("beyond",
  no ``to``) or closed, with the interval convention of each boundary
  (``include_from``, ``include_to``; ``include_start``, ``include_stop`` for
  absolute ranges), and offsets combined with an absolute ``start``/``stop``;
* **relative to what**: ``reference_power.kind`` ``carrier`` (unmodulated
  carrier), ``channel`` (total power in the channel bandwidth), ``dbsd``
  (highest power in any ``reference_power.bandwidth`` inside the necessary
  band) or ``none`` (absolute limits only), besides ``mean`` and ``pep``;
* **what**: ``level_dbw``, ``density_dbm_per_hz``, field strength
  (``field_uv_per_m`` / ``field_dbuv_per_m`` at ``distance_m``), absolute
  levels as ``eirp`` or ``erp`` (``quantity``), and ``combine`` (all terms
  hold, or the least stringent one does);
* **formulas** may use the displacement frequency ``fd_hz``, ``fd_khz``,
  ``fd_percent`` (percent of the authorised bandwidth), the frequency
  ``freq_hz`` and ``power_dbw``;
* **how to measure**: ``quasi-peak`` detectors, ``narrower_rbw`` per
  reference bandwidth, reference bandwidths for the whole region;
* **when**: ``applies.when`` (a condition on the station, e.g. a power
  class) and ``applies.variant`` (e.g. an installation date) choose between
  variants of a rule.

Version 4 adds ``applies.bands``: the carrier bands of a rule that covers
several (``bands = [["150 MHz", "174 MHz"], ["421 MHz", "512 MHz"]]``), in
place of the one range ``applies.fundamental``.  A carrier between the bands
is outside the rule; the check refuses it unless asked to go on
(``outside_bands=True``), and then it cannot pass.

Version 5 grades the provenance: the file lists the checks made on its
values (``[[provenance]]``: ``source``, ``edition``, ``kind`` = official,
reprint or memory, ``confirms`` = key paths of the values) and the values the
rule does not state (``[[choice]]``); ``authority``, ``citation`` and
``measurement_note`` move to the top level; the grade (verified, checked,
partial, unchecked) and ``verified`` are derived
(:mod:`maskcheck.masks.provenance`).

Quantities and constants are checked when the file loads; expressions are
compiled when the file loads and evaluated when a station is known
(:mod:`maskcheck.masks.evaluate`).

References
----------
.. [1] TOML v1.0.0 specification (tables, arrays of tables).
.. [2] pydantic v2 documentation, "Models", "Validators" and "JSON Schema".
"""

from __future__ import annotations

import json
from importlib import resources

from .._version import MASK_SCHEMA_VERSION
from .models import (
    DETECTORS,
    DOMAIN_ANCHORS,
    OFFSET_ORIGINS,
    REFERENCE_POWER_KINDS,
    REGION_KINDS,
    Applies,
    DomainsSpec,
    Fundamental,
    Limit,
    Mask,
    Offset,
    Provenance,
    ChoiceEntry,
    SourceCheckEntry,
    ReferenceBand,
    ReferencePowerSpec,
    Region,
    keys_at,
)
from .values import BANDWIDTH_VARIABLES, FREQUENCY_VARIABLES, LIMIT_VARIABLES, VARIABLES, Value, parse_value

__all__ = [
    "VARIABLES",
    "FREQUENCY_VARIABLES",
    "LIMIT_VARIABLES",
    "BANDWIDTH_VARIABLES",
    "REGION_KINDS",
    "DOMAIN_ANCHORS",
    "DETECTORS",
    "REFERENCE_POWER_KINDS",
    "OFFSET_ORIGINS",
    "Value",
    "parse_value",
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
    "keys_at",
    "MASK_SCHEMA_ID",
    "SCHEMA_FILE",
    "mask_json_schema",
    "generated_json_schema_text",
    "shipped_json_schema",
    "shipped_json_schema_text",
]

#: The file the package ships the JSON Schema in (package data of ``maskcheck.schema``).
SCHEMA_FILE = f"mask-schema-v{MASK_SCHEMA_VERSION}.json"

#: The ``$id`` of the JSON Schema of this format version (a name of our own; nothing is fetched from it).
MASK_SCHEMA_ID = f"urn:maskcheck:mask-schema:v{MASK_SCHEMA_VERSION}"


def mask_json_schema() -> dict:
    """JSON Schema of the mask-file format, generated from the models.

    It carries an ``$id`` naming the format version, the draft it follows,
    and bounds on ``schema_version`` (1 to the newest this release reads).
    The package ships the same document as a file
    (:func:`shipped_json_schema`); a test keeps the two equal.

    Examples
    --------
    >>> schema = mask_json_schema()
    >>> sorted(schema["properties"])[:3]
    ['applies', 'authority', 'choice']
    >>> schema["properties"]["schema_version"]["maximum"] == MASK_SCHEMA_VERSION
    True
    """
    body = Mask.model_json_schema(mode="validation")
    version = body["properties"]["schema_version"]
    version["minimum"] = 1
    version["maximum"] = MASK_SCHEMA_VERSION
    schema = {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": MASK_SCHEMA_ID,
        "$comment": f"maskcheck mask-file format, schema_version {MASK_SCHEMA_VERSION}",
    }
    schema.update(body)
    return schema


def generated_json_schema_text() -> str:
    """:func:`mask_json_schema` as the text of the shipped file (2-space indent, UTF-8, final newline)."""
    return json.dumps(mask_json_schema(), indent=2, ensure_ascii=False) + "\n"


def shipped_json_schema_text() -> str:
    """The JSON Schema file the package ships, as text (``maskcheck/schema/``, found with importlib.resources)."""
    return resources.files("maskcheck.schema").joinpath(SCHEMA_FILE).read_text(encoding="utf-8")


def shipped_json_schema() -> dict:
    """The JSON Schema file the package ships, parsed."""
    return json.loads(shipped_json_schema_text())
