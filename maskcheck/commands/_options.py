"""Python parameter names -> command-line option names: the one map the CLI uses.

Library code (core, io, masks, sim, checking, plan, report) names its Python
parameters in errors and sets ``param=`` on the exception::

    >>> from maskcheck.errors import StationError
    >>> exc = StationError("guard_db=-1 must be >= 0 (the guard band, dB)", param="guard_db")
    >>> str(exc)
    'guard_db=-1 must be >= 0 (the guard band, dB)'

The command line is the one place that knows option names.  It prints such an
error with :func:`error_line`, which names the option, with the value as the
user typed it when the options still hold it::

    >>> error_line(exc, {"guard": "-1dB"})
    '--guard -1dB: must be >= 0 (the guard band, dB)'

The form is always ``OPTION VALUE: what is wrong`` when the message opens with
``param=value``; otherwise ``OPTION: message`` (the prefix is left out when the
message already names the option).  Other parameter names in the message
(``give power_w, or calibrate with full_scale_w``) become their options too.
Commands that validate their own options raise with ``where="--option"`` and
are printed as they are.
"""

from __future__ import annotations

import re

__all__ = ["OPTIONS", "FLAGS", "NO_OPTION", "option_of", "with_options", "error_line", "check_workers"]

#: Python parameter (as library errors name it in ``param=``) -> the option that sets it
OPTIONS: dict[str, str] = {
    # the station and the check
    "carrier_hz": "--carrier",
    "power_w": "--power",
    "pep_w": "--pep",
    "designator": "--designator",
    "emission": "--emission",
    "guard_db": "--guard",
    "exclude_hz": "--exclude",
    "report_threshold_db": "--list-within",
    "xdb_db": "--xdb",
    "power_tolerance_db": "--power-tolerance",
    "x_db": "--xdb",
    "necessary": "--necessary-bw",
    "necessary_bw_hz": "--necessary-bw",
    "stated_hz": "--necessary-bw",
    "authorized_bw_hz": "--authorized-bw",
    "authorized": "--authorized-bw",
    "sideband": "--sideband",
    "outside_bands": "--outside-bands",
    # formula inputs of the necessary bandwidth
    "max_mod_hz": "--max-mod",
    "low_mod_hz": "--low-mod",
    "deviation_hz": "--deviation",
    "symbol_rate_bd": "--baud",
    "shift_hz": "--shift",
    "k_factor": "--k-factor",
    "wpm": "--wpm",
    "wpm_convention": "--wpm-convention",
    "roll_off": "--roll-off",
    "channels": "--channels",
    # domains
    "rule": "--boundary",
    "percent": "--percent",
    # traces
    "rbw_hz": "--rbw",
    "freq_unit": "--freq-unit",
    "level_unit": "--level-unit",
    "detector": "--detector",
    "layout": "--layout",
    # IQ recordings and their estimation
    "datatype": "--format",
    "sample_rate_hz": "--rate",
    "centre_hz": "--centre",
    "i_channel": "--i-channel",
    "window": "--window",
    "kaiser_beta": "--window",
    "overlap": "--overlap",
    "segment_samples": "--segment",
    "usable_fraction": "--usable-fraction",
    "judge_artefacts": "--judge-artefacts",
    "trace": "--trace",
    "frame_s": "--frame",
    "workers": "--workers",
    "full_scale_w": "--full-scale",
    "ref_tone_hz": "--ref-tone",
    "ref_tone_w": "--ref-tone",
    "correction": "--correction",
    # bandwidth and two-tone
    "beta": "--beta",
    "floor_threshold_db": "--floor-threshold",
    "band_hz": "--band",
    "attenuator_db": "--attenuator",
    "setup": "--setup",
    # plan
    "floor_margin_db": "--floor-margin",
    "extra_loss_db": "--attenuator",
    "lowest_hz": "--lowest",
    # design
    "vary": "--vary",
    "goal": "--goal",
    "samples": "--samples",
    "grid": "--grid",
    "mask": "--mask",
    # outputs
    "force": "--force",
    "folder": "--figures",
    # campaigns
    "scheduler": "--scheduler",
    "out": "--out",
}

#: boolean parameters whose option is a flag: ``force=True`` reads ``--force``
FLAGS = frozenset({"force", "outside_bands", "judge_artefacts"})

#: parameters library errors name that no option sets (computed values,
#: per-frame indices, the API's own switches); the CLI prints them as they are
NO_OPTION = frozenset({
    "occupied_bw_hz",  # measured, never typed
    "frame",  # index of a frame of a time-resolved estimate
    "frame_segments",  # derived from --frame
    "threads",  # the estimator's own argument; --workers sets it
    "averages",
    "spectrum",  # the input itself: the trace or recording named on the command line
    "bandwidth_hz",  # format_bandwidth_code: a computed bandwidth
    "code",  # parse_bandwidth_code: a code inside a designator
    "mode",  # xdb_bandwidth: --inner is a flag of its own
    "reference_w",  # the reference power a mask's relative limits are below: computed by the check
    "window_half_hz",  # the fundamental window the check decided (--exclude sets exclude_hz)
    "spacing_hz",  # twotone: the measured tone spacing
    "campaign",  # run_campaign: the campaign file named on the command line (or Python entries)
    "entries",  # run_entries: the entries of the campaign file
})

# Names replaced wherever they stand as a word: those with an underscore (they
# cannot be English), and the few single words that are not English either.
# Single English words (window, trace, force, ...) are replaced only as
# ``name=`` so a sentence keeps its words.
_BARE = frozenset({p for p in OPTIONS if "_" in p} | {"wpm"})


def option_of(param: str | None) -> str | None:
    """The option that sets ``param``, or None."""
    return OPTIONS.get(param) if param else None


def _dest(option: str) -> str:
    """argparse's attribute name of an option (``--list-within`` -> ``list_within``)."""
    return option.lstrip("-").replace("-", "_")


def _typed(param: str, options) -> str | None:
    """The value of the option as the user typed it, when the parsed options still hold it as text."""
    if options is None:
        return None
    opt = OPTIONS[param]
    got = options.get(_dest(opt)) if isinstance(options, dict) else getattr(options, _dest(opt), None)
    return got.strip() if isinstance(got, str) and got.strip() else None


def _word(param: str) -> re.Pattern:
    # not part of a longer name, a key path (regions[2].rbw_hz), a header key ('# rbw_hz:') or an option
    return re.compile(rf"(?<![\w.:/\[\-#'\"])(?<!# ){re.escape(param)}(?![\w\]'\"(])")


_ASSIGN = {p: re.compile(rf"(?<![\w.\[\-]){re.escape(p)}=") for p in OPTIONS}
_WORDS = {p: _word(p) for p in _BARE}


def with_options(message: str) -> str:
    """``message`` with every parameter name in it replaced by its option (``give power_w`` -> ``give --power``)."""
    return _rename(message)


def _rename(message: str) -> str:
    """Every parameter name in ``message`` replaced by its option."""
    for p in FLAGS:
        message = re.sub(rf"(?<![\w.\-]){re.escape(p)}=True\b", OPTIONS[p], message)
    # longest names first, so that 'ref_tone_hz' is not read as 'ref_tone' + '_hz'
    for p in sorted(OPTIONS, key=len, reverse=True):
        message = _ASSIGN[p].sub(OPTIONS[p] + " ", message)
        if p in _WORDS:
            message = _WORDS[p].sub(OPTIONS[p], message)
    return message


def error_line(exc, options=None) -> str:
    """One line naming the option for a library error (``str(exc)`` for any other).

    Parameters
    ----------
    exc : MaskcheckError
        The error; ``exc.param`` names the Python parameter, if any.
    options : argparse.Namespace or dict, optional
        The parsed options, to quote the value as the user typed it.
    """
    param = getattr(exc, "param", None)
    message = getattr(exc, "message", str(exc))
    option = option_of(param)
    if option is not None:
        m = re.match(rf"{re.escape(param)}=(.*?)(?::\s+|\s+)(?=\S)(.*)$", message, re.S)
        if m and param not in FLAGS:
            value = _typed(param, options) or m.group(1)
            message = f"{option} {value}: {_rename(m.group(2))}"
        else:
            message = _rename(message)
            if not re.search(rf"(?<![\w-]){re.escape(option)}(?![\w-])", message):
                message = f"{option}: {message}"
    else:
        return str(exc)
    prefix = _place(exc)
    return f"{prefix}: {message}" if prefix else message


def _place(exc) -> str:
    """``path, line N`` / ``path, key`` of an error, as :class:`~maskcheck.errors.MaskcheckError` writes it."""
    path, where = getattr(exc, "path", None), getattr(exc, "where", None)
    prefix = path or ""
    if where is not None:
        loc = f"line {where}" if isinstance(where, int) else str(where)
        prefix = f"{prefix}, {loc}" if prefix else loc
    return prefix


def check_workers(args, error) -> None:
    """``--workers`` and ``--scheduler`` checked together, as every command that spreads work checks them.

    ``error`` is the command's error class (raised with ``where="--workers"``).
    """
    if args.workers is not None and args.workers < 0:
        raise error(f"{args.workers} is not a number of worker processes; expected 0 or more", where="--workers")
    if args.scheduler and args.scheduler != "local" and args.workers is not None:
        raise error("a running Dask scheduler has its own workers; --workers applies to local processes "
                    "and to --scheduler local", where="--workers")
    if args.scheduler is not None and args.workers == 0:
        raise error("0 (in this process) cannot run on a Dask cluster; give 1 or more, or leave out --scheduler",
                    where="--workers")
