"""Readers and writers: everything that touches a file.

A library of modules, each with ``__all__``; the package itself re-exports
nothing.  Readers return a :class:`~maskcheck.core.spectrum.Spectrum` (or IQ
blocks for :mod:`maskcheck.core.estimate`); their errors name the file and
the line or key.

================  ==================================================================
``trace_text``    ``read_trace``: the maskcheck trace text format, and exports as they come
``trace_head``    the head of a trace file: ``#`` lines, a settings block, header and units rows
``trace_words``   the words the reader knows: units, keys, settings words, column names
``trace_facts``   the facts of a trace's head decided once, checked against its data
``trace_layout``  layout files: how to read an export the reader cannot work out alone
``trace_write``   writing spectra as trace text files
``iq``            SigMF, WAV and raw IQ recordings, read in blocks
``iq_spectrum``   a recording -> a calibrated ``Spectrum``
``iq_write``      writing a SigMF recording
``correction``    correction tables of recordings
``setup``         measurement-setup files (chain, instrument, antenna factor)
``setup_budget``  the uncertainty budget of a setup file
``remeasure``     the re-measure list file (``check --remeasure``, ``plan --remeasure``)
``output``        atomic writes, refusing to overwrite without ``force``
``hashing``       SHA-256 of inputs
================  ==================================================================
"""

__all__: list[str] = []
