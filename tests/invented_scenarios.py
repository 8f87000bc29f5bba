"""Short scenario files of our own for the tests (invented: no real transmitter is described).

Each is a 1 kHz tone at 7 MHz for 0.1 s at 48 kS/s; the caller gives the chain
(modulator, filters, amplifier, antenna), the analysis and, if any, the mask of
the ``[check]`` table.
"""

__all__ = ["short_scenario"]


def short_scenario(name: str, chain: str, *, analysis: str = 'rbw = "100 Hz"\nmax_harmonic = 3',
                   mask: str | None = None) -> str:
    """The text of a scenario file named ``"NAME (invented)"``."""
    text = (f'scenario_version = 1\nname = "{name} (invented)"\n'
            '[signal]\ncarrier = "7 MHz"\nsample_rate = "48 kHz"\nduration = "0.1 s"\n'
            '[source]\nkind = "tone"\nfrequency = "1 kHz"\n'
            f'{chain.strip()}\n[analysis]\n{analysis.strip()}\n')
    return text + (f'[check]\nmask = "{mask}"\n' if mask else "")
