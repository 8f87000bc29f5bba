"""Time-resolved judging of a recording: every frame checked, the worst one kept.

A recording estimated frame by frame (``--frame`` on the command line) is
judged as a whole and frame by frame with the same check.  The whole
recording's result stands unless some frame has a lower worst margin; then
that frame's result is the one returned.  Either way the result records the
frames, the worst frame and its start, and both margins, and a warning says
which was judged.  Nothing is mutated: the chosen result is copied with
these additions.
"""

from __future__ import annotations

import math
from dataclasses import replace
from typing import Callable, Sequence

from ..core.records import TimeResolvedRecord

__all__ = ["judge_frames", "worst_margin_db"]


def worst_margin_db(result) -> float:
    """Worst margin of a result over its regions, dB (+inf when none was evaluated)."""
    margins = [r.worst_margin_db for r in result.regions if r.worst_margin_db is not None]
    return min(margins) if margins else math.inf


def judge_frames(whole, frame_spectrum: Callable[[int], object], *, frames: int, frame_s: float,
                 starts_s: Sequence[float], averages: Sequence[int], judge: Callable):
    """Judge ``frames`` frames with ``judge`` and return the worst result (see the module docstring).

    Parameters
    ----------
    whole : CheckResult
        The result of the whole recording.
    frame_spectrum : callable
        ``frame_spectrum(i)`` gives the Spectrum of frame ``i`` (made on demand,
        so that only one frame is held at a time).
    frames : int
    frame_s : float
        Duration of one frame, s.
    starts_s, averages : sequences
        Each frame's start, s, and its number of averaged segments.
    judge : callable
        ``judge(spectrum) -> CheckResult``: the same check as for the whole.
    """
    best_score, best_index, best_result = math.inf, 0, None
    for i in range(frames):
        r = judge(frame_spectrum(i))
        score = worst_margin_db(r)
        if best_result is None or score < best_score:
            best_score, best_index, best_result = score, i, r
    whole_score = worst_margin_db(whole)
    info = TimeResolvedRecord(
        frames=frames, frame_s=float(frame_s), worst_frame=best_index, worst_frame_start_s=float(starts_s[best_index]),
        worst_frame_margin_db=None if best_score == math.inf else best_score, worst_frame_averages=int(averages[best_index]),
        whole_recording_margin_db=None if whole_score == math.inf else whole_score,
    )
    if best_score < whole_score:
        chosen = best_result
        note = (
            f"time-resolved: frame {best_index} (from {info.worst_frame_start_s:.6g} s, {info.worst_frame_averages} "
            f"averages) is judged: its worst margin {best_score:.2f} dB is below the whole recording's "
            f"{'none' if whole_score == math.inf else f'{whole_score:.2f} dB'} (verdict of the whole recording: {whole.verdict})"
        )
    else:
        chosen = whole
        note = f"time-resolved: no frame of {frames} does worse than the whole recording"
    return replace(chosen, warnings=[note, *chosen.warnings],
                   spectrum_summary=replace(chosen.spectrum_summary, time_resolved=info))
