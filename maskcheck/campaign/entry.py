"""One entry of a campaign, resolved: what one check is given, as plain numbers (SI units) and absolute paths.

An :class:`Entry` is what the engine sends to a worker (it pickles small:
no arrays, no loaded mask), what a Python caller builds directly, and what
the resume key is computed from (:meth:`Entry.identity`).
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field

__all__ = ["Entry", "DEFAULT_OUTPUTS"]

#: what an entry writes unless told otherwise: all that ``maskcheck check`` can write
DEFAULT_OUTPUTS = ("json", "pdf", "csv", "spectrum")


@dataclass(frozen=True)
class Entry:
    """One check of a campaign.

    Parameters
    ----------
    name : str
        Unique within the campaign; the entry's folder is named after it.
    traces, recordings : tuple of str
        Trace files (stitched when several) or IQ recordings (SigMF or WAV).
    scenario : str or Scenario, optional
        A scenario file (or a validated :class:`maskcheck.sim.scenario.Scenario`)
        to simulate; its wideband spectrum is judged.  Exactly one kind of input.
    mask : str
        Mask id or mask file (for a scenario, default: its ``[check] mask``).
    carrier_hz, power_w, pep_w : float, optional
        The station (a scenario gives its own carrier and powers).
    guard_db, list_within_db, xdb_db, power_tolerance_db, exclude_hz
        As the options of ``maskcheck check`` of the same names (``guard_db`` None: 0 dB, or a scenario's own).
    authorized_bw, necessary_bw : float or str, optional
        Hz, or ``"necessary"`` / ``"measured"``.
    rbw_hz, detector, freq_unit, level_unit : optional
        What trace files do not say themselves (``--rbw``, ...); for recordings ``rbw_hz`` is the RBW to estimate with.
    full_scale_w : float, optional
        Calibration of recordings: a full-scale tone reads this power.
    setup : str, optional
        A measurement-setup file; ``attenuator_db`` a pad added after its chain.
    outputs : tuple of str
        Of ``"json"``, ``"pdf"``, ``"csv"``, ``"spectrum"``: what the entry writes into its folder.
    values : tuple of (str, str)
        The axis labels of a matrix entry (``(("channel", "ch1"), ("power", "5W"))``), for the matrix.
    """

    name: str
    traces: tuple[str, ...] = ()
    recordings: tuple[str, ...] = ()
    scenario: object = None
    mask: str | None = None
    mask_dirs: tuple[str, ...] = ()
    setup: str | None = None
    attenuator_db: float | None = None
    carrier_hz: float | None = None
    power_w: float | None = None
    pep_w: float | None = None
    designator: str | None = None
    sideband: str | None = None
    guard_db: float | None = None
    list_within_db: float = 20.0
    xdb_db: float = 26.0
    power_tolerance_db: float | None = None
    exclude_hz: float | None = None
    authorized_bw: float | str | None = None
    necessary_bw: float | str | None = None
    outside_bands: bool = False
    rbw_hz: float | None = None
    detector: str | None = None
    freq_unit: str | None = None
    level_unit: str | None = None
    full_scale_w: float | None = None
    outputs: tuple[str, ...] = DEFAULT_OUTPUTS
    values: tuple[tuple[str, str], ...] = field(default_factory=tuple)

    def input_paths(self) -> tuple[str, ...]:
        """Every file the entry reads (its inputs, a scenario file, the setup file)."""
        paths = [*self.traces, *self.recordings]
        if isinstance(self.scenario, str):
            paths.append(self.scenario)
        if self.setup:
            paths.append(self.setup)
        return tuple(paths)

    def identity(self) -> dict:
        """The entry's settings as JSON-able data (part of its resume key; see :mod:`.runner`)."""
        d = asdict(self) if not _is_model(self.scenario) else {**asdict(_without_scenario(self)),
                                                                 "scenario": self.scenario.model_dump(mode="json")}
        d["values"] = [list(v) for v in self.values]
        for k in ("traces", "recordings", "mask_dirs", "outputs"):
            d[k] = list(d[k])
        return d


def _is_model(obj) -> bool:
    return obj is not None and hasattr(obj, "model_dump")


def _without_scenario(entry: Entry) -> Entry:
    from dataclasses import replace

    return replace(entry, scenario=None)
