"""maskcheck: pre-compliance checks of transmitter emissions against regulatory masks.

A screening aid, not a certification: the local regulator and accredited
laboratories decide.

Public names
------------
==========================  ==========================================================
``read_trace(path)``        read a spectrum-analyser trace in the maskcheck text format
``read_recording(path)``    read an IQ recording and estimate its calibrated spectrum
``read_setup(path)``        read a measurement-setup file (the chain, the instrument)
``apply_setup(s, setup)``   correct a spectrum for a setup and/or a fixed pad
                            (``attenuator_db=``), as ``check --setup --attenuator``
``load_mask(id_or_path)``   load a mask from the built-in library or a TOML file
``list_masks()``            every mask the library (and user folders) hold
``Station(...)``            carrier frequency, mean power, PEP of the transmitter
``check(s, mask, st)``      judge a spectrum against a mask -> ``CheckResult``
``CheckResult``             the conclusion as plain data; ``.to_dict()`` for JSON
``write_json(r, path)``     write a result as ``check --json`` does (``"-"``: standard output)
``write_report(r, path)``   write the PDF evidence report, as ``check --report``
``write_csv(r, path)``      write the margins table, as ``check --csv``
``write_figures(r, dir)``   write the report's plots as SVG files, as ``check --figures``
``Spectrum``                the validated spectrum every reader makes
``stitch(spectra)``         join several spans into one spectrum
``occupied_bandwidth``      the beta/2 (99 %) bandwidth of a spectrum
``xdb_bandwidth``           the x-dB bandwidth of a spectrum
``__version__``             version of the package
``MASK_SCHEMA_VERSION``     newest mask-file schema version this release reads
``MaskcheckError``          base of every error bad input or usage causes (``.path``,
                            ``.where``, ``.param``)
``UnitError``               a quantity that cannot be parsed or has the wrong unit
``SpectrumError``           arrays that cannot form a valid spectrum
``TraceError``              a malformed trace file
``RecordingError``          a malformed IQ recording or its missing description
``CorrectionError``         a malformed correction table, or one that does not cover
``SetupError``              a malformed measurement-setup file
``MaskError``               a malformed or inconsistent mask file (``.problems``)
``StationError``            station data that is missing or impossible
``OutputError``             an output file that cannot or must not be written
``ScenarioError``           a malformed or impossible simulation scenario file
``DesignError``             a design question (varied key, range, goal) that cannot be asked
``CampaignError``           a malformed campaign file (``.problems``, every one at once)
``run_campaign(c, out)``    run a campaign (a file or Python entries) -> its matrix
==========================  ==========================================================

Names are loaded on first use, so ``maskcheck --version`` starts without
numpy, scipy or pydantic.  Every error is also the matching built-in
(``ValueError``, ``OSError``) and names the Python parameter it is about
(``guard_db=-1 must be >= 0``, ``.param == "guard_db"``); the command line
prints the option instead.

Modules
-------
The names above are the stable surface.  Beside them, these packages carry a
table of their own public names: :mod:`maskcheck.errors` (the exception
family), :mod:`maskcheck.checking` (the check's steps),
:mod:`maskcheck.masks`, :mod:`maskcheck.sim` and :mod:`maskcheck.report`.
:mod:`maskcheck.core` and :mod:`maskcheck.io` are libraries of modules (each
listed in its package docstring, each with ``__all__``) that the names above
are built from.  Internal, and free to change between releases: modules whose
name starts with an underscore (``_version``, ``_toml``,
``commands._common``, ...), :mod:`maskcheck.commands` and :mod:`maskcheck.cli`
(the command line: use it as a program, not as an API) and
:mod:`maskcheck.demo`.
"""

from importlib import import_module

from ._version import MASK_SCHEMA_VERSION, __version__

__all__ = [
    "read_trace",
    "read_recording",
    "read_setup",
    "apply_setup",
    "load_mask",
    "list_masks",
    "Station",
    "check",
    "CheckResult",
    "write_json",
    "write_report",
    "write_csv",
    "write_figures",
    "Spectrum",
    "stitch",
    "occupied_bandwidth",
    "xdb_bandwidth",
    "__version__",
    "MASK_SCHEMA_VERSION",
    "MaskcheckError",
    "UnitError",
    "SpectrumError",
    "TraceError",
    "RecordingError",
    "CorrectionError",
    "SetupError",
    "MaskError",
    "StationError",
    "OutputError",
    "ScenarioError",
    "DesignError",
    "CampaignError",
    "run_campaign",
]

_LAZY = {
    "run_campaign": "maskcheck.campaign.runner",
    "read_trace": "maskcheck.io.trace_text",
    "read_recording": "maskcheck.io.iq_spectrum",
    "read_setup": "maskcheck.io.setup",
    "apply_setup": "maskcheck.io.setup",
    "write_json": "maskcheck.report.tables",
    "write_report": "maskcheck.report.pdf",
    "write_csv": "maskcheck.report.margins_csv",
    "write_figures": "maskcheck.report.figures",
    "load_mask": "maskcheck.masks.library",
    "list_masks": "maskcheck.masks.library",
    "Station": "maskcheck.core.station",
    "check": "maskcheck.checking",
    "CheckResult": "maskcheck.core.result",
    "Spectrum": "maskcheck.core.spectrum",
    "stitch": "maskcheck.core.spectrum",
    "occupied_bandwidth": "maskcheck.core.bandwidth",
    "xdb_bandwidth": "maskcheck.core.bandwidth",
    **{name: "maskcheck.errors" for name in __all__ if name.endswith("Error")},
}


def __getattr__(name):
    if name in _LAZY:
        value = getattr(import_module(_LAZY[name]), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'maskcheck' has no attribute {name!r}")


def __dir__():
    return sorted(__all__)
