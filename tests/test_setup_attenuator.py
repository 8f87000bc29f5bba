"""io.setup.with_attenuator: a pad given on the command line, applied as one more part of the chain."""

import numpy as np
import pytest

from maskcheck.core.spectrum import Spectrum
from maskcheck.errors import SetupError
from maskcheck.io.setup import ATTENUATOR_PART_NAME, parse_setup, with_attenuator


def _spectrum():
    f = np.linspace(14.0e6, 14.4e6, 401)
    return Spectrum(f, np.full(f.size, 1e-6), 1e3)


def test_pad_alone_adds_its_loss_and_is_recorded():
    out = with_attenuator(None, 40.0).apply(_spectrum())
    # Closed form: a 40 dB loss ahead of the analyser: the power at the transmitter is 10^4 times the reading
    assert np.allclose(out.power_w, 1e-6 * 1e4, rtol=1e-12)
    assert out.corrections.total_db_min == out.corrections.total_db_max == 40.0
    assert [p.correction.name for p in out.setup.chain] == [ATTENUATOR_PART_NAME]


def test_pad_comes_after_the_setup_chain_and_keeps_the_file():
    setup = parse_setup('schema_version = 1\n[[chain]]\nname = "cable"\nkind = "cable"\nloss_db = 1.5\n',
                        path="bench.toml", sha256="ab" * 32)
    both = with_attenuator(setup, 20.0)
    assert both.path == "bench.toml" and both.sha256 == "ab" * 32
    out = both.apply(_spectrum())
    # Closed form: losses in series add in dB, 1.5 + 20
    assert out.corrections.total_db_min == pytest.approx(21.5, abs=1e-12)
    assert [p.correction.name for p in out.setup.chain] == ["cable", ATTENUATOR_PART_NAME]
    assert len(setup.file.chain) == 1  # the setup given is not changed


@pytest.mark.parametrize("bad", [-40.0, float("inf"), float("nan")])
def test_negative_or_non_finite_pad_is_refused(bad):
    with pytest.raises(SetupError) as exc:
        with_attenuator(None, bad)
    assert exc.value.param == "attenuator_db"
