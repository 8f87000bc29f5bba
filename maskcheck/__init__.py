"""maskcheck: pre-compliance checks of transmitter emissions against regulatory masks.

A screening aid, not a certification: the local regulator and accredited
laboratories decide.

Public names
------------
========================  ==========================================================
``read_trace(path)``      read a spectrum-analyser trace in the maskcheck text format
``load_mask(id_or_path)`` load a mask from the built-in library or a TOML file
``list_masks()``          every mask the library (and user folders) hold
``Station(...)``          carrier frequency, mean power, PEP of the transmitter
``check(s, mask, st)``    judge a spectrum against a mask -> ``CheckResult``
``CheckResult``           the conclusion as plain data; ``.to_dict()`` for JSON
``Spectrum``              the validated spectrum every reader makes
``stitch(spectra)``       join several spans into one spectrum
``occupied_bandwidth``    the beta/2 (99 %) bandwidth of a spectrum
``xdb_bandwidth``         the x-dB bandwidth of a spectrum
``__version__``           version of the package
``MASK_SCHEMA_VERSION``   newest mask-file schema version this release reads
========================  ==========================================================

Names are loaded on first use, so ``maskcheck --version`` starts without
numpy, scipy or pydantic.
"""

from importlib import import_module

from ._version import MASK_SCHEMA_VERSION, __version__

__all__ = [
    "read_trace",
    "load_mask",
    "list_masks",
    "Station",
    "check",
    "CheckResult",
    "Spectrum",
    "stitch",
    "occupied_bandwidth",
    "xdb_bandwidth",
    "__version__",
    "MASK_SCHEMA_VERSION",
]

_LAZY = {
    "read_trace": "maskcheck.io.trace_text",
    "load_mask": "maskcheck.masks.library",
    "list_masks": "maskcheck.masks.library",
    "Station": "maskcheck.core.station",
    "check": "maskcheck.checking",
    "CheckResult": "maskcheck.core.result",
    "Spectrum": "maskcheck.core.spectrum",
    "stitch": "maskcheck.core.spectrum",
    "occupied_bandwidth": "maskcheck.core.bandwidth",
    "xdb_bandwidth": "maskcheck.core.bandwidth",
}


def __getattr__(name):
    if name in _LAZY:
        value = getattr(import_module(_LAZY[name]), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'maskcheck' has no attribute {name!r}")


def __dir__():
    return sorted(__all__)
