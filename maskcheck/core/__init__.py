"""The numeric core: numpy and scipy only, no files, no terminal, no PDF.

A library of modules, each with ``__all__``; the package itself re-exports
nothing (so importing one module loads only what it needs).  The stable
names are re-exported by :mod:`maskcheck`.

====================  ==============================================================
``units``             parse what people type; dB <-> W conversions (checked, and
                      unchecked fast variants for validated values)
``spectrum``          ``Spectrum`` (validated arrays) and ``stitch``
``bandwidth``         occupied (beta/2) and x-dB bandwidth
``estimate``          streaming Welch estimate of IQ samples (RBW, windows, frames)
``station``           ``Station``: what the checker must know that the spectrum does not say
``verdict``           judging one region against plain limits
``peaks``             local peaks with height and prominence (numpy, as scipy.signal.find_peaks)
``windows``           the estimation windows (numpy, as scipy.signal.get_window)
``result``            ``CheckResult`` and its records (plain, JSON-able data)
``records``           the frozen records that ride along with a Spectrum and a
                      CheckResult (estimation, calibration, setup, corrections, ...)
``designator``        emission designators: parse, describe, build
``necessary``         necessary bandwidth from the published formulas
``domains``           the out-of-band / spurious boundary
``corrections``       setup corrections, field strength <-> EIRP
``twotone``           the two-tone test: PEP, mean power, products
``artefacts``         the receiver's own readings in a recording: DC line, IQ images, usable band
``uncertainty``       the guard band, the decision rule and the uncertainty budget
``remeasure``         whether a reading with other settings than the rule's could
                      change its verdict (noise peak-over-mean, RBW ratio)
``matrix``            the matrix of a campaign: one row per entry (plain data)
``compare``           what changed between two results: margins, emissions, verdicts
====================  ==============================================================
"""

__all__: list[str] = []
