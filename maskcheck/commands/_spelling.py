"""One spelling and one help text for each option, written once: the table every command's parser uses.

An option that more than one command takes (``--setup``, ``--attenuator``,
``--rbw``, ``--json``, ...) is added with :func:`add_option`, which takes its
spelling, its metavar and its help from :data:`OPTION_TEXTS`.  A command may
add a short ``detail`` after the shared text (its default, or what the option
does there: ``check --power`` falls back to the measured channel power), never
a text of its own.  ``tests/test_option_audit.py`` holds every parser to this
table: an option that two commands take has the table's text in both, and no
quantity has two visible spellings.

Older spellings still accepted are hidden aliases (:data:`HIDDEN_ALIASES`):
they parse to the same destination, and ``--help`` shows only the spelling of
the table.
"""

from __future__ import annotations

import argparse

__all__ = ["OPTION_TEXTS", "HIDDEN_ALIASES", "add_option", "add_identity_options", "usage_hint", "JSON_BARE_HINT"]

#: option -> (metavar or None for a flag, the one help text)
OPTION_TEXTS: dict[str, tuple[str | None, str]] = {
    # the rule and the station
    "--mask": ("ID|FILE", "mask id from 'maskcheck masks list', or a mask TOML file"),
    "--mask-dir": ("DIR", "extra folder of mask files (repeatable; also MASKCHECK_MASK_PATH)"),
    "--carrier": ("F", "carrier frequency, e.g. 7.1MHz"),
    "--power": ("P", "mean power at the antenna port, e.g. 100W or 50dBm"),
    "--pep": ("P", "peak envelope power at the antenna port, e.g. 400W (PEP-referenced rules)"),
    "--designator": ("CODE", "emission designator, e.g. 2K70J3E"),
    "--necessary-bw": ("BW", "necessary bandwidth, e.g. 2.7kHz, when the designator has no bandwidth code"),
    "--authorized-bw": ("BW", "authorised bandwidth, e.g. 12.5kHz"),
    # formula inputs of the necessary bandwidth
    "--max-mod": ("F", "highest modulation frequency M, e.g. 3kHz"),
    "--low-mod": ("F", "lowest modulation frequency (J3E), e.g. 300Hz"),
    "--sideband": (None, "single sideband only: --carrier is then the suppressed carrier, and the emission's centre "
                         "is placed f_low + Bn/2 above (upper) or below (lower) it"),
    "--deviation": ("F", "peak frequency deviation D, e.g. 5kHz"),
    "--baud": ("BD", "modulation (symbol) rate B in baud, e.g. 100"),
    "--wpm": ("N", "Morse speed in words per minute (A1A, A2A)"),
    "--wpm-convention": (None, "wpm to baud: 'itu' B = 0.8 x wpm (the ITU worked example; default) or 'paris' "
                               "B = wpm x 50/60"),
    "--shift": ("F", "frequency shift of FSK (F1B, F1D), e.g. 170Hz"),
    "--k-factor": ("K", "the formula's factor K (default 5 for Morse, 1 for FM, 1.2 for FSK)"),
    "--roll-off": ("A", "roll-off of a linear digital modulation, e.g. 0.35"),
    "--channels": ("N", "number of channels (B8E), default 2"),
    # the radio, as the choice of a mask sees it (masks which, check without --mask, masks list)
    "--service": ("NAME", "radio service: land-mobile, amateur, unlicensed, ..."),
    "--authority": ("NAME", "whose rules: FCC, ITU, CEPT, ETSI, ..."),
    "--channel": ("BW", "channel bandwidth of the equipment, e.g. 12.5kHz"),
    "--audio-filter": (None, "whether the transmitter has an audio low-pass filter (yes or no)"),
    "--installed": ("YYYY-MM-DD", "installation date of the transmitter (47 CFR 97.307(d))"),
    "--station": ("NAME", "name of the station (call sign, site or client's label): shown on every page, in the JSON "
                          "and on the terminal"),
    "--equipment": ("TEXT", "the equipment under test (make, model, serial number): shown on every page, in the JSON "
                            "and on the terminal"),
    "--guard": ("DB", "guard band: margins below it are 'marginal'"),
    "--xdb": ("DB", "x of the x-dB bandwidth, e.g. 26dB"),
    "--outside-bands": (None, "go on with a carrier outside the mask's carrier bands (refused otherwise); every output "
                              "then says so"),
    # the measurement chain
    "--setup": ("TOML", "measurement-setup file: its chain (attenuators, cables; antenna factor and distance if "
                        "radiated) corrects every level"),
    "--attenuator": ("DB", "a fixed pad ahead of the analyser, e.g. 40dB, after the setup's chain (its loss is added "
                           "to every reading)"),
    "--correction": ("FILE", "correction table of the setup: dB added to every level, per frequency"),
    # traces
    "--rbw": ("BW", "resolution bandwidth, e.g. 10kHz: of traces that do not state it; for IQ recordings the RBW "
                    "(noise bandwidth) to estimate with"),
    "--freq-unit": (None, "frequency unit of traces whose header does not say"),
    "--level-unit": (None, "level unit of traces whose header does not say"),
    "--detector": (None, "detector of traces that do not state it"),
    # IQ recordings
    "--format": ("TYPE", "datatype of a raw I/Q file: cf32_le, ci16_le, ci8, cu8, ... (SigMF names)"),
    "--rate": ("F", "sample rate of a raw I/Q file, e.g. 2.4MHz"),
    "--centre": ("F", "centre frequency of a raw I/Q or WAV file, e.g. 7.1MHz"),
    "--i-channel": (None, "WAV channel holding I (default left)"),
    "--window": ("NAME", "estimation window: blackman-harris (default), flat-top, hann, or kaiser:BETA (e.g. "
                         "kaiser:14)"),
    "--overlap": ("PCT", "segment overlap, e.g. 50%% (default) or 0.75"),
    "--segment": ("N", "segment length in samples (instead of --rbw; default 4096)"),
    "--trace": (None, "average (rms detector) or max-hold (peak-detector emulation); auto: max-hold only if the "
                      "mask asks for peak"),
    "--frame": ("T", "time-resolved: judge frames of this duration (e.g. 50ms) and report the worst"),
    "--full-scale": ("P", "calibration of a recording: a full-scale tone reads this power, e.g. 0dBm"),
    "--ref-tone": ("F=P", "calibration of a recording: a tone of known power in it, e.g. 7.1MHz=-10dBm"),
    "--workers": ("N", "how many threads or processes work in parallel; the numbers do not depend on it, and the "
                       "number asked for is recorded"),
    "--scheduler": ("ADDRESS|local", "run on a Dask cluster: the scheduler's address (tcp://host:8786), or 'local' "
                                     "for a local one (needs the 'distributed' package)"),
    # receiver artefacts of recordings (the texts of the options as the lead wrote them in commands/_recording.py)
    "--usable-fraction": ("F", "part of the sample rate about the centre kept as usable, e.g. 80%% (default) or 0.9: the "
                               "band edges beyond it, where the receiver's anti-alias filter rolls off, are not judged"),
    "--judge-artefacts": (None, "judge the readings flagged as the receiver's (its DC line, IQ images) as the "
                                "transmitter's; by default one over its limit makes its range incomplete"),
    # outputs
    "--json": ("PATH", "write the result as JSON to PATH ('-' for standard output)"),
    "--report": ("PDF", "write the PDF report"),
    "--layout": ("FILE", "layout file (TOML) naming the head lines, columns and units of an export the reader cannot "
                         "work out; see docs/trace-format.md"),
    "--attach-inputs": (None, "with --report: embed the trace files, the recordings' metadata files, the setup file and "
                              "the correction table in the PDF too, with their SHA-256 (files over 8 MiB are listed, not "
                              "embedded)"),
    "--remeasure": ("PATH", "the re-measure list (JSON): readings taken with another detector or a wider RBW than the "
                            "rule's whose verdict the rule's settings could change, with the analyser settings of a "
                            "second pass"),
    "--csv": ("PATH", "write the margins table as CSV: one row per region, then one per listed emission ('-' for "
                      "standard output)"),
    "--figures": ("DIR", "write every plot of the report as an SVG file into this folder (created if missing)"),
    "--out": ("PATH", "where the output goes"),
    "--force": (None, "overwrite existing output files"),
    "--quiet": (None, "print no summary"),
}

#: older spellings still parsed, hidden from --help: alias -> (the option of the table, why it is kept)
HIDDEN_ALIASES: dict[str, tuple[str, str]] = {
    "--center": ("--centre", "the American spelling, accepted as typed"),
    "--pdf": ("--report", "plan's name of its PDF before every command wrote it with --report"),
    "--bandwidth": ("--authorized-bw", "masks show/plot's name of the authorised bandwidth before it was spelled as "
                                       "everywhere else"),
}

#: the one line a bare ``--json`` (the flag of earlier versions) is refused with
JSON_BARE_HINT = "--json needs a PATH: '--json -' writes the JSON to standard output, '--json FILE' to a file"


def usage_hint(message: str) -> str:
    """argparse's usage message, with the hint for a bare ``--json`` (the flag of earlier versions).

    argparse cannot tell a bare ``--json`` followed by a positional argument
    (``designator --json 2K70J3E``) from ``--json PATH``, so the bare form is
    not kept: where argparse sees it (the end of the line, or another option
    next), it is refused with :data:`JSON_BARE_HINT` rather than guessed.
    """
    return JSON_BARE_HINT if message == "argument --json: expected one argument" else message


def add_option(p, option: str, *, detail: str | None = None, metavar: str | None = None, alias: str | None = None,
               **kwargs):
    """Add ``option`` to ``p`` (a parser or an argument group) with the table's metavar and help.

    Parameters
    ----------
    detail : str, optional
        Appended to the shared help after ``"; "``: the command's default, or
        what the option does in this command.
    metavar : str, optional
        Only where the command takes more than the table's metavar says
        (``check --necessary-bw BW|measured``).
    alias : str, optional
        An older spelling this command still parses, hidden from ``--help``;
        one of :data:`HIDDEN_ALIASES`, for this option.
    **kwargs
        Passed to ``add_argument`` (``default``, ``required``, ``choices``, ``action``, ``dest``).
    """
    table_metavar, text = OPTION_TEXTS[option]
    help_text = text if not detail else f"{text}; {detail}"
    names = [option]
    flag = kwargs.get("action") in ("store_true", "store_false", "append_const", "count")
    if not flag and "choices" not in kwargs:
        kwargs.setdefault("metavar", metavar or table_metavar)
    elif metavar:
        kwargs["metavar"] = metavar
    action = p.add_argument(*names, help=help_text, **kwargs)
    if alias is not None:
        if HIDDEN_ALIASES[alias][0] != option:
            raise ValueError(f"{alias} is listed as an alias of {HIDDEN_ALIASES[alias][0]}, not of {option}")
        extra = {k: v for k, v in kwargs.items() if k not in ("required", "default", "metavar", "dest")}
        p.add_argument(alias, dest=action.dest, help=argparse.SUPPRESS, default=argparse.SUPPRESS, **extra)
    return action


def add_identity_options(p) -> None:
    """``--station NAME`` and ``--equipment TEXT``: who and what was measured, on every page of the outputs."""
    add_option(p, "--station", default="")
    add_option(p, "--equipment", default="")
