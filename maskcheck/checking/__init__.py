"""The check: ``check(spectrum, mask, station) -> CheckResult``.

A short sequence of named steps, each deciding one thing once and handing a
frozen record to the next (the order is that of :func:`check`):

===============  ===============================================================
``emission``     designator (parsed once), necessary and authorised bandwidth,
                 domains, the SSB centre -> ``EmissionFacts``
``window``       the fundamental window, the one owner of its rule
                 -> ``FundamentalWindow``
``fundamental``  channel power, occupied and x-dB bandwidth in that window
                 -> ``FundamentalReadings``
``guard``        the guard band, once: given, from the setup's uncertainty
                 budget, or none -> ``GuardBand``
``reference``    the reference power, once, on the spectrum's scale
                 -> ``Reference``
``regions``      the region loop, occupied-bandwidth judgement, merging of
                 close emissions -> ``JudgedRegions``
``remeasure``    readings taken with other settings than the rule's whose
                 verdict those settings could change -> ``RemeasureList``
``summary``      verdicts combined, the ``CheckResult`` assembled as data
``pipeline``     ``check()`` itself: the steps in order
``frames``       time-resolved judging of a recording (a loop above ``check``)
===============  ===============================================================

No step does I/O: the commands read files and write outputs.
"""

from .pipeline import check, utc_now
from .window import FundamentalWindow, fundamental_window

__all__ = ["check", "utc_now", "FundamentalWindow", "fundamental_window"]
