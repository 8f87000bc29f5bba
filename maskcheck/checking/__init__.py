"""The check: ``check(spectrum, mask, station) -> CheckResult``.

A short sequence of named steps, each deciding one thing once and handing a
typed record to the next (see ``DEVELOPERS.md``):

==================  ==========================================================
``window``          the fundamental window (the one owner of its rule)
``pipeline``        ``check()`` itself: the steps in order
==================  ==========================================================

No step does I/O: the commands read files and write outputs.
"""

from .pipeline import check, utc_now
from .window import FundamentalWindow, fundamental_window

__all__ = ["check", "utc_now", "FundamentalWindow", "fundamental_window"]
