"""The base of every table of a mask file, and the way its validators report a problem."""

from __future__ import annotations

from pydantic import BaseModel, ConfigDict
from pydantic_core import PydanticCustomError

from ..core.units import format_frequency
from .values import Value

__all__ = ["Table", "problem", "span_text"]


def problem(message: str, **context) -> PydanticCustomError:
    """A validation problem whose message pydantic reports as it is (the loader adds file and key path)."""
    return PydanticCustomError("mask_rule", "{message}", {"message": message, **context})


def span_text(start: Value, stop: Value) -> str:
    """A range of two frequency values in words ("9 kHz – 30 MHz", or the expressions as written)."""
    if start.is_constant and stop.is_constant:
        return f"{format_frequency(start.constant())} – {format_frequency(stop.constant())}"
    return f"{start.text} – {stop.text}"


class Table(BaseModel):
    """A TOML table: unknown keys are errors; values are frozen; strings are stripped."""

    model_config = ConfigDict(extra="forbid", frozen=True, str_strip_whitespace=True)
