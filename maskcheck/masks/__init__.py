"""Mask files: their schema, the safe limit expressions, the library, evaluation.

A mask is one TOML file per rule set (``docs/mask-format.md`` describes the
format).  This package reads and validates those files and evaluates a mask
for one station into plain numbers; comparing a spectrum with them is the
check's job.

============================  ================================================
``load_mask``                 a mask by id (built-in or user folders) or by path
``list_masks``                every mask on the search path, sorted by id
``validate_mask_file``        read and validate one file (all problems at once)
``mask_json_schema``          JSON Schema of the mask-file format
``Mask``                      the validated model of one mask file
``evaluate_mask``             a mask for one station -> ``RegionLimits`` per region
``RegionLimits``              range, detector, reference bandwidths, limit in W
``reference_power_w``         the power relative limits are below, with its note
``applies_to``                is a carrier inside the mask's bands, and why
``require_in_bands``          refuse a carrier outside them (unless asked to go on)
``fundamental_exclusion_hz``  the default half-width skipped around the carrier
``compile_expression``        the whitelisted expression compiler
``Expression``                a compiled expression (``evaluate``, ``names``)
``MASK_SCHEMA_VERSION``       newest ``schema_version`` this release reads
``grade_mask``                the grade of a mask's rule data and what it rests on
``GRADES``                    verified, checked, partial, unchecked (best first)
``audit_rows``                every mask's grade, texts read and unconfirmed values
============================  ================================================
"""

from .._version import MASK_SCHEMA_VERSION
from .evaluate import evaluate_mask
from .limits import RegionLimits
from .station_values import applies_to, fundamental_exclusion_hz, reference_power_w, require_in_bands
from .expr import Expression, compile_expression
from .library import list_masks, load_mask, validate_mask_file
from .schema import Mask, mask_json_schema
from .provenance import GRADES, grade_mask
from .audit import audit_rows

__all__ = [
    "MASK_SCHEMA_VERSION",
    "load_mask",
    "list_masks",
    "validate_mask_file",
    "mask_json_schema",
    "Mask",
    "evaluate_mask",
    "RegionLimits",
    "reference_power_w",
    "applies_to",
    "require_in_bands",
    "fundamental_exclusion_hz",
    "compile_expression",
    "Expression",
    "grade_mask",
    "GRADES",
    "audit_rows",
]
