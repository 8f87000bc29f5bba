"""The transmitter simulator: sources, modulators, filters, amplifier and harmonic zones.

Pure numpy/scipy; no file I/O.  Every stage passes on a
:class:`Baseband` (complex baseband IQ in sqrt(W) around a stated carrier,
with one note per stage), and records are periodic (linear filters act as
their steady-state response at the DFT bins).

Public names
------------
===========================  ======================================================
``Baseband``                 complex baseband IQ, sample rate, carrier, notes
``sources``                  tones, 2.1049 test tones, speech-like noise, Morse keying, RRC symbols
``modulate``                 AM, DSB-SC, SSB (phasing, filter), FM, PM, CW, FSK, PSK/QAM
``IfFilter``                 the SSB sideband filter (scipy.signal digital design)
``OutputFilter``             the harmonic low-pass (scipy.signal analog design)
``Polynomial``, ``Rapp``,    memoryless amplifier models
``Saleh``
``drive``                    set the amplifier's input back-off
``amplify``                  the amplifier's zones (fundamental, harmonics, DC) as Basebands
``apply_output_filter``      the output low-pass on every zone at its RF frequencies
===========================  ======================================================
"""

from . import modulate, sources
from .amplifier import Polynomial, Rapp, Saleh, Zones, amplify, apply_output_filter, drive, zone_coefficient
from .baseband import Baseband
from .filters import IfFilter, OutputFilter

__all__ = [
    "Baseband",
    "sources",
    "modulate",
    "IfFilter",
    "OutputFilter",
    "Polynomial",
    "Rapp",
    "Saleh",
    "Zones",
    "zone_coefficient",
    "drive",
    "amplify",
    "apply_output_filter",
]
