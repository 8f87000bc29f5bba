"""Which trace of a recording a mask is judged on: the one owner of that rule (``check --trace auto``, campaigns)."""

from __future__ import annotations

__all__ = ["trace_for_mask"]


def trace_for_mask(mask) -> str:
    """``"max-hold"`` when some region of the mask asks for a peak detector, else ``"average"`` (RMS)."""
    wants_peak = any(getattr(r, "detector", "") == "peak" for r in getattr(mask, "regions", ()))
    return "max-hold" if wants_peak else "average"
