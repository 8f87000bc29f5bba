"""The measurement chain a checking command corrects its readings by: ``--setup`` and ``--attenuator``.

One reading of the options for every command that corrects levels (check,
twotone), so that a pad typed on the command line is applied and recorded
exactly as a pad in a setup file (:func:`maskcheck.io.setup.with_attenuator`).
"""

from __future__ import annotations

import math

__all__ = ["setup_from_args"]


def setup_from_args(args):
    """The setup (with the pad) that corrects the levels, or None; refused combinations raise first.

    ``--setup`` with ``--correction`` is refused (the losses would count
    twice), and so is a negative pad.
    """
    from ..core.units import parse_db
    from ..errors import SetupError, UnitError
    from ..io.setup import read_setup, with_attenuator

    setup = None
    if getattr(args, "setup", None):
        if getattr(args, "correction", None):
            raise SetupError("give the chain in --setup or a --correction table, not both (the losses would be added "
                             "twice)", where="--correction")
        setup = read_setup(args.setup)
    if getattr(args, "attenuator", None):
        pad = parse_db(args.attenuator, what="--attenuator")
        if not (math.isfinite(pad) and pad >= 0):
            raise UnitError(f"{args.attenuator!r} must be a loss of 0 dB or more (a pad ahead of the analyser)",
                            where="--attenuator")
        setup = with_attenuator(setup, pad)
    return setup
