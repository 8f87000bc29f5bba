#!/bin/sh
# INVENTED example design question (no real equipment is described): how much
# back-off does the imaginary overdriven 40 m SSB transmitter of
# overdriven-amplifier.toml need so that every emission has 3 dB of margin
# under its rule?  Its amplifier runs 3 dB past compression and its second
# harmonic fails by about 10 dB; the design varies amplifier.backoff from
# -3 dB to 15 dB, solves for the boundary and writes the solved scenario
# (design-backoff/solved-scenario.toml), a JSON and a PDF.
# A simulation is a design aid, not evidence: a built transmitter is measured.
# tests/test_examples.py runs the command below.
maskcheck design examples/overdriven-amplifier.toml --vary amplifier.backoff=-3dB..15dB --goal "margin >= 3 dB" --out design-backoff
