"""The design solver: from "does it pass?" to "what must change so that it passes with margin?".

A loop above the simulator and :func:`maskcheck.checking.check`: one
scenario, one or two of its keys varied over a range, each point simulated
and checked as it is, until a goal holds.  It never copies a step of the
simulation or of the check.

==========================  ===================================================
``design``                  answer one design question about a scenario file
``DesignResult``            what a design found (solution, crossings, map, counts)
``parse_goal``, ``Goal``    the goal grammar (``margin >= 3 dB``, ``im3 >= 30 dB``)
``parse_vary``, ``Vary``    a varied key and its range (``amplifier.backoff=0dB..12dB``)
``Evaluator``               points simulated once each (cache by content hash)
``run_points``              the one place where points run in parallel
``solve_one``, ``solve_two``  the one-key solver and the two-key map
==========================  ===================================================

A simulation is a design aid, not evidence: a built transmitter is measured.
"""

from .evaluate import Evaluator
from .goal import Goal, parse_goal
from .grid import run_points
from .keys import Vary, parse_vary
from .run import design
from .solve import DesignResult, solve_one, solve_two

__all__ = ["design", "DesignResult", "parse_goal", "Goal", "parse_vary", "Vary", "Evaluator", "run_points",
           "solve_one", "solve_two"]
