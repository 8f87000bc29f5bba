"""Campaigns: a measurement programme (many checks) in one run, on this machine or a Dask cluster.

The loop above :func:`maskcheck.checking.check`: every entry is judged by
one call of it; nothing here repeats a step of the check.

=========================  ==================================================
``load_campaign(path)``    read and validate a campaign file (every problem at once)
``parse_campaign(text)``   the same from TOML text
``Campaign``               a validated campaign: name and resolved entries
``Entry``                  one check of a campaign (inputs, station, settings)
``run_entries(entries)``   judge entries in parallel -> one ``Outcome`` each
``Outcome``                how one entry ended: its matrix row, its result
``judge(entry)``           judge one entry in this process
``run_campaign(c, out)``   resume, run, write the matrix -> ``CampaignMatrix``
``resume_key(entry)``      the SHA-256 that decides whether an entry runs again
``CAMPAIGN_VERSION``       newest campaign-file version this release reads
=========================  ==================================================

The file format is described in ``docs/campaign-format.md``.
"""

from __future__ import annotations

import importlib

__all__ = ["load_campaign", "parse_campaign", "Campaign", "Entry", "run_entries", "Outcome", "judge", "run_campaign",
           "resume_key", "CAMPAIGN_VERSION"]

_WHERE = {"load_campaign": "file", "parse_campaign": "file", "Campaign": "file", "Entry": "entry",
          "run_entries": "engine", "Outcome": "engine", "judge": "engine", "run_campaign": "runner",
          "resume_key": "runner", "CAMPAIGN_VERSION": "models"}


def __getattr__(name: str):
    module = _WHERE.get(name)
    if module is None:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    return getattr(importlib.import_module(f"{__name__}.{module}"), name)


def __dir__():
    return sorted(set(globals()) | set(__all__))
