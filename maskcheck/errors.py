"""The exception family of maskcheck.

Every error that bad input can cause is a subclass of :class:`MaskcheckError`
and also of the matching built-in (``ValueError``, ``OSError``), so callers
that know only the built-ins still catch it.  Each carries ``.path`` (the file,
if any) and ``.where`` (a line number, a TOML key path or an option name), and
formats itself as one line a person can act on::

    trace.txt, line 14: 'abc' is not a number (expected a level in dBm)

Library code (core, io, masks, sim, checking, plan, report) names its Python
parameters, never command-line options, and sets ``param=`` on the error::

    guard_db=-1 must be >= 0 (the guard band, dB)        # .param == "guard_db"

The command line maps ``param`` to its option (one map, in
:mod:`maskcheck.commands._options`), prints one line and exits with code 2;
no traceback reaches a user for bad input.  Numbers in messages are plain
(:func:`format_value`): a numpy scalar never shows as ``np.float64(...)``.
"""

from __future__ import annotations

import numbers

__all__ = [
    "format_value",
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
]


def format_value(value) -> str:
    """A value as an error message writes it: numbers plain, anything else as its repr.

    Integers print as integers and other real numbers with up to 12
    significant digits (``:.12g``), so a numpy scalar reads like any number
    (``np.float64(7199900.0)`` -> ``7199900``) and a value that is almost a
    whole number still shows its fraction (``3.0000001``).

    Examples
    --------
    >>> format_value(-1.0), format_value(3), format_value(3.0000001), format_value("abc"), format_value(None)
    ('-1', '3', '3.0000001', "'abc'", 'None')
    """
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        return repr(value)
    if isinstance(value, numbers.Integral):
        return str(int(value))
    return f"{float(value):.12g}"


class MaskcheckError(Exception):
    """Base of every maskcheck error caused by input or usage.

    Parameters
    ----------
    message : str
        What was found and what was expected.
    path : str or os.PathLike, optional
        The file the problem is in.
    where : str or int, optional
        Line number (int) or key path (str) inside ``path``.
    param : str, optional
        The name of the Python parameter the problem is about (``guard_db``).
        Library code names its parameters, never command-line options; the
        command layer maps parameter names to its option names.
    """

    def __init__(self, message: str, *, path=None, where=None, param=None):
        super().__init__(message)
        self.message = message
        self.path = None if path is None else str(path)
        self.where = where
        self.param = param

    def __str__(self) -> str:
        prefix = ""
        if self.path is not None:
            prefix = self.path
        if self.where is not None:
            loc = f"line {self.where}" if isinstance(self.where, int) else str(self.where)
            prefix = f"{prefix}, {loc}" if prefix else loc
        return f"{prefix}: {self.message}" if prefix else self.message


class UnitError(MaskcheckError, ValueError):
    """A quantity could not be parsed or has the wrong unit family."""


class SpectrumError(MaskcheckError, ValueError):
    """Arrays that cannot form a valid :class:`~maskcheck.core.spectrum.Spectrum`."""


class TraceError(MaskcheckError, ValueError):
    """A malformed trace file."""


class RecordingError(MaskcheckError, ValueError):
    """A malformed IQ recording (SigMF, WAV or raw) or its missing description."""


class CorrectionError(MaskcheckError, ValueError):
    """A malformed correction table, or one that does not cover the spectrum."""


class SetupError(MaskcheckError, ValueError):
    """A malformed measurement-setup file (instrument, chain, antenna factors).

    ``problems`` holds every problem found (all are reported at once, each
    naming the file and the TOML key path); the message joins them.
    """

    def __init__(self, message: str, *, path=None, where=None, param=None, problems=None):
        super().__init__(message, path=path, where=where, param=param)
        self.problems = list(problems) if problems else [str(self)]


class MaskError(MaskcheckError, ValueError):
    """A malformed or inconsistent mask file.

    ``problems`` holds every problem found (all are reported at once); the
    message joins them.
    """

    def __init__(self, message: str, *, path=None, where=None, param=None, problems=None):
        super().__init__(message, path=path, where=where, param=param)
        self.problems = list(problems) if problems else [message]


class StationError(MaskcheckError, ValueError):
    """Station data (carrier, power, ...) that is missing or impossible."""


class OutputError(MaskcheckError, OSError):
    """An output file that cannot or must not be written."""


class ScenarioError(MaskcheckError, ValueError):
    """A malformed or impossible simulation scenario file.

    ``problems`` holds every problem found, each as ``"key.path: message"``
    (all are reported at once); the message joins them on one line.
    """

    def __init__(self, message: str, *, path=None, where=None, param=None, problems=None):
        super().__init__(message, path=path, where=where, param=param)
        self.problems = list(problems) if problems else [message]


class DesignError(MaskcheckError, ValueError):
    """A design question that cannot be asked: a key that cannot be varied, a range or a goal that cannot be read."""


class CampaignError(MaskcheckError, ValueError):
    """A malformed campaign file (a programme of many checks), or one whose entries cannot be set up.

    ``problems`` holds every problem found, each as ``"key.path: message"``
    (all are reported at once, nothing is run); the message joins them on one line.
    """

    def __init__(self, message: str, *, path=None, where=None, param=None, problems=None):
        super().__init__(message, path=path, where=where, param=param)
        self.problems = list(problems) if problems else [message]
