"""Memoryless power-amplifier models and the harmonic zones they make, on the complex envelope.

A memoryless nonlinearity ``y = F(v)`` driven by the RF voltage
``v(t) = Re{x(t) exp(j w t)}`` (``x`` the peak complex envelope,
``x = sqrt(2) * iq``) puts out a sum of zones, zone n around n w:
``y = z0 + Re{sum_n z_n(t) exp(j n w t)}``.  For the power series
``F(v) = sum_k a_k v**k`` the zones follow from the binomial expansion of
``((x e^{jwt} + conj(x) e^{-jwt}) / 2)**k``:

    z_n = sum over k >= n, k - n even, of  a_k 2**(1-k) C(k, (k+n)/2) x**n |x|**(k-n)

and the DC zone z0 takes half of that (n = 0).  So the second, third ...
harmonics appear at their true frequencies with their true spectral shape
(the n-fold self-convolution of the signal's spectrum and more), without
sampling the RF carrier.

The Rapp and Saleh models are envelope (zone-1) models: they say what
happens to the envelope at the fundamental and nothing about harmonics.  An
optional polynomial (``harmonics=``) then supplies zones 0 and 2 and up.

Voltages are peak volts across 1 ohm (a sine of peak A carries A**2/2 W);
each zone n >= 1 is returned as a :class:`~maskcheck.sim.baseband.Baseband`
at carrier n fc with ``iq = z_n / sqrt(2)`` (so mean(|iq|**2) is its power);
the DC zone (``carrier_hz = 0``) holds the real voltage z0 itself.

References
----------
.. [1] S. A. Maas, *Nonlinear Microwave and RF Circuits*, 2nd ed., Artech
   House, 2003, ch. 4 (power-series analysis, two-tone products).
.. [2] C. Rapp, "Effects of HPA-nonlinearity on a 4-DPSK/OFDM-signal for a
   digital sound broadcasting system", Proc. 2nd European Conf. on
   Satellite Communications, Liege, 1991, pp. 179-184.
.. [3] A. A. M. Saleh, "Frequency-independent and frequency-dependent
   nonlinear models of TWT amplifiers", IEEE Trans. Commun. 29 (1981)
   1715-1720, doi:10.1109/TCOM.1981.1094911.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import scipy.optimize
import scipy.signal
import scipy.special
import threadpoolctl

from .baseband import Baseband, apply_response, require_finite, require_positive
from .filters import OutputFilter
from ..errors import format_value

__all__ = [
    "Polynomial",
    "Rapp",
    "Saleh",
    "Zones",
    "zone_coefficient",
    "drive",
    "amplify",
    "apply_output_filter",
]

#: Samples per block when the polynomial's zones are formed: its powers and
#: products for one block (order x block floats) stay in the processor's cache.
#: Common practice, no published source; any size gives the same numbers.
ZONE_BLOCK = 16384


def zone_coefficient(k: int, n: int) -> float:
    """The factor of ``a_k x**n |x|**(k-n)`` in zone n of the term ``a_k v**k``.

    ``2**(1-k) C(k, (k+n)/2)`` for n >= 1, half of that for the DC zone, and
    0 when k < n or k - n is odd.

    Examples
    --------
    >>> zone_coefficient(3, 1), zone_coefficient(3, 3), zone_coefficient(2, 0), zone_coefficient(4, 1)
    (0.75, 0.25, 0.5, 0.0)
    """
    if k < n or (k - n) % 2 or n < 0:
        return 0.0
    c = 2.0 ** (1 - k) * float(scipy.special.comb(k, (k + n) // 2, exact=True))
    return c / 2 if n == 0 else c


_blas_controller = None


def _blas_on_this_thread():
    """A context in which BLAS (numpy's matmul) works on the calling thread alone.

    The zone products are small (a dozen rows by a block of samples), and
    OpenBLAS would hand each to its own worker threads, which then spin for
    a while after every call: on a 2-core machine they took one core from
    the estimator's threads that follow (about 60 ms of CPU in a 10 s
    simulation).  :mod:`threadpoolctl` sets the limit and restores it.
    """
    global _blas_controller
    if _blas_controller is None:
        _blas_controller = threadpoolctl.ThreadpoolController()
    return _blas_controller.limit(limits=1, user_api="blas")


def _divide_by_real(z: np.ndarray, d: float) -> None:
    """``z /= d`` in place for a complex ``z`` and a real ``d``, as a product of both parts with ``1 / d``.

    numpy divides a complex number by ``d + 0j`` with Smith's method, which for
    a zero imaginary part is exactly ``(re * (1 / d), im * (1 / d))``; these are
    the same numbers from a real multiplication, about five times faster.
    """
    parts = z.view(np.float64)
    np.multiply(parts, 1.0 / d, out=parts)


def _split(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    r = np.abs(x)
    u = np.divide(x, r, out=np.ones_like(x), where=r > 0)  # 1 where the envelope is 0
    return r, u


@dataclass(frozen=True)
class Polynomial:
    """Memoryless power series ``y = a1 v + a2 v**2 + ... + aK v**K`` acting on the RF voltage.

    Parameters
    ----------
    coefficients : sequence of float
        ``(a1, a2, ..., aK)``, in V**(1-k); even orders make the even
        harmonics and the DC zone, odd orders the odd harmonics and the
        intermodulation next to the carrier.

    Examples
    --------
    >>> amp = Polynomial((1.0, 0.0, -0.1))
    >>> round(amp.input_1db_compression_v, 4)   # sqrt(4/3 (1 - 10**(-1/20)) |a1/a3|)
    1.2042
    """

    coefficients: tuple[float, ...]

    def __post_init__(self):
        c = tuple(require_finite(f"coefficients[{i}]", a) for i, a in enumerate(self.coefficients))
        if not c or c[0] == 0:
            raise ValueError(f"coefficients={format_value(self.coefficients)} has no linear gain a1 (expected (a1, a2, ...), a1 != 0)")
        object.__setattr__(self, "coefficients", c)

    @property
    def order(self) -> int:
        return len(self.coefficients)

    def zone_amplitude(self, r: np.ndarray, n: int) -> np.ndarray:
        """Zone-n output amplitude for an input envelope of peak amplitude ``r`` (the factor of ``u**n``)."""
        r = np.asarray(r, dtype=float)
        out = np.zeros_like(r)
        for k, a in enumerate(self.coefficients, start=1):
            c = zone_coefficient(k, n)
            if c and a:
                out = out + a * c * r**k
        return out

    def zones(self, x: np.ndarray, max_zone: int, *, skip: tuple[int, ...] = ()) -> dict[int, np.ndarray]:
        """Zone n of ``x`` for n = 0 .. ``max_zone`` (those not in ``skip``): ``u**n sum_k a_k c(k, n) r**k``.

        The powers ``r**k`` are made by repeated multiplication and every
        zone's amplitude comes from one matrix product of the coefficients
        ``a_k c(k, n)`` with them (no power calls, no Python loop over
        samples), a block of :data:`ZONE_BLOCK` samples at a time, so the
        powers and products stay in the processor's cache and only the zones
        themselves take whole-record memory.
        """
        return self._zones(*_split(x), max_zone, skip=skip)

    def _zones(self, r: np.ndarray, u: np.ndarray, max_zone: int, *, skip: tuple[int, ...] = (),
               divisor: float = 1.0) -> dict[int, np.ndarray]:
        # divisor: every zone but the DC one is divided by it, block by block while it is in the cache
        ns, rows = [], []
        for n in range(0, min(self.order, max_zone) + 1):
            row = [a * zone_coefficient(k, n) for k, a in enumerate(self.coefficients, start=1)]
            if n not in skip and any(row):
                ns.append(n)
                rows.append(row)
        if not ns:
            return {}
        coef = np.asarray(rows)
        out = {n: np.empty(r.size, dtype=float if n == 0 else complex) for n in ns}
        block = min(ZONE_BLOCK, r.size)
        r_pow = np.empty((self.order, block))
        amps = np.empty((len(ns), block))
        u_pow = np.empty(block, dtype=complex)
        with _blas_on_this_thread():  # small products: threads would cost more than they bring
            for i in range(0, r.size, block):
                j = min(i + block, r.size)
                rb, ub, m = r[i:j], u[i:j], j - i
                rp = r_pow[:, :m]
                rp[0] = rb
                for k in range(1, self.order):
                    np.multiply(rp[k - 1], rb, out=rp[k])
                ab = amps[:, :m]
                np.matmul(coef, rp, out=ab)
                up, power = u_pow[:m], 0
                for n, amp in zip(ns, ab):
                    while power < n:
                        if power == 0:
                            up[:] = ub
                        else:
                            up *= ub
                        power += 1
                    if n == 0:
                        out[0][i:j] = amp
                    else:
                        ob = out[n][i:j]
                        np.multiply(amp, up, out=ob)
                        if divisor != 1.0:
                            _divide_by_real(ob, divisor)
        return out

    @property
    def input_1db_compression_v(self) -> float:
        """Input peak amplitude where the zone-1 gain has fallen by 1 dB, V (a compressing series only)."""
        a1 = self.coefficients[0]
        target = abs(a1) * 10 ** (-1 / 20)
        gain = lambda r: abs(self.zone_amplitude(np.array([r]), 1)[0]) / r - target  # noqa: E731
        # search upward for the first drop below the target
        r_hi = 1e-6
        while gain(r_hi) > 0:
            r_hi *= 1.25
            if r_hi > 1e12:
                raise ValueError(f"the series {format_value(self.coefficients)} does not compress by 1 dB (no input 1 dB point)")
        return float(scipy.optimize.brentq(gain, r_hi / 1.25, r_hi, xtol=1e-14, rtol=1e-12))

    @property
    def input_reference_v(self) -> float:
        """The input amplitude that back-off is counted from: the input 1 dB compression point, V."""
        return self.input_1db_compression_v

    def describe(self) -> str:
        return "polynomial amplifier, " + ", ".join(f"a{k} = {a:g}" for k, a in enumerate(self.coefficients, 1) if a)


@dataclass(frozen=True)
class Rapp:
    """Rapp's solid-state amplifier model (AM/AM only): ``|y| = g r / (1 + (g r / A_sat)**(2p))**(1/(2p))``.

    Parameters
    ----------
    gain : float
        Small-signal voltage gain g.
    saturation_v : float
        Output saturation amplitude A_sat, peak volts.
    smoothness : float
        p (> 0): 1 is soft, 2-3 a typical solid-state amplifier, large p a hard limiter.

    Examples
    --------
    >>> amp = Rapp(1.0, 1.0, 2.0)
    >>> round(20 * math.log10(amp.zone_amplitude(np.array([1.0]))[0]), 4)   # -3.0103 / p dB
    -1.5051
    """

    gain: float = 1.0
    saturation_v: float = 1.0
    smoothness: float = 2.0

    def __post_init__(self):
        require_positive("gain", self.gain)
        require_positive("saturation_v", self.saturation_v)
        require_positive("smoothness", self.smoothness)

    def zone_amplitude(self, r: np.ndarray) -> np.ndarray:
        p = float(self.smoothness)
        gr = float(self.gain) * np.asarray(r, dtype=float)
        return gr / (1 + (gr / float(self.saturation_v)) ** (2 * p)) ** (1 / (2 * p))

    def zones(self, x: np.ndarray, max_zone: int) -> dict[int, np.ndarray]:
        return self._zones(*_split(x), max_zone)

    def _zones(self, r: np.ndarray, u: np.ndarray, max_zone: int, *, divisor: float = 1.0) -> dict[int, np.ndarray]:
        z = self.zone_amplitude(r) * u
        if divisor != 1.0:
            _divide_by_real(z, divisor)
        return {1: z}

    @property
    def input_reference_v(self) -> float:
        """Input amplitude at which the linear output would reach A_sat, V (back-off is counted from here)."""
        return float(self.saturation_v) / float(self.gain)

    def describe(self) -> str:
        return f"Rapp amplifier, gain {self.gain:g}, saturation {self.saturation_v:g} V, p = {self.smoothness:g}"


@dataclass(frozen=True)
class Saleh:
    """Saleh's travelling-wave-tube model: ``A(r) = a_a r / (1 + b_a r**2)``, ``phi(r) = a_p r**2 / (1 + b_p r**2)``.

    The defaults are the parameter set most often quoted with the 1981
    paper (2.1587, 1.1517, 4.0033, 9.1040); which of the paper's tables it
    comes from has not been checked.

    Examples
    --------
    >>> amp = Saleh()
    >>> round(amp.input_reference_v, 4), round(float(amp.zone_amplitude(np.array([amp.input_reference_v]))[0]), 4)
    (0.9318, 1.0058)
    """

    alpha_a: float = 2.1587
    beta_a: float = 1.1517
    alpha_phi: float = 4.0033
    beta_phi: float = 9.1040

    def __post_init__(self):
        require_positive("alpha_a", self.alpha_a)
        require_positive("beta_a", self.beta_a)
        require_finite("alpha_phi", self.alpha_phi)
        require_positive("beta_phi", self.beta_phi, allow_zero=True)

    def zone_amplitude(self, r: np.ndarray) -> np.ndarray:
        r = np.asarray(r, dtype=float)
        return float(self.alpha_a) * r / (1 + float(self.beta_a) * r * r)

    def phase_rad(self, r: np.ndarray) -> np.ndarray:
        r = np.asarray(r, dtype=float)
        return float(self.alpha_phi) * r * r / (1 + float(self.beta_phi) * r * r)

    def zones(self, x: np.ndarray, max_zone: int) -> dict[int, np.ndarray]:
        return self._zones(*_split(x), max_zone)

    def _zones(self, r: np.ndarray, u: np.ndarray, max_zone: int, *, divisor: float = 1.0) -> dict[int, np.ndarray]:
        z = self.zone_amplitude(r) * np.exp(1j * self.phase_rad(r)) * u
        if divisor != 1.0:
            _divide_by_real(z, divisor)
        return {1: z}

    @property
    def input_reference_v(self) -> float:
        """Input amplitude of the output maximum, 1/sqrt(beta_a), V (back-off is counted from here)."""
        return 1.0 / math.sqrt(float(self.beta_a))

    def describe(self) -> str:
        return (f"Saleh amplifier, alpha_a {self.alpha_a:g}, beta_a {self.beta_a:g}, "
                f"alpha_phi {self.alpha_phi:g}, beta_phi {self.beta_phi:g}")


_MODELS = (Polynomial, Rapp, Saleh)


def _check_model(model):
    if not isinstance(model, _MODELS):
        raise ValueError(f"model={format_value(model)} is not a Polynomial, Rapp or Saleh amplifier")
    return model


def drive(bb: Baseband, model, backoff_db: float, *, reference: str = "pep") -> Baseband:
    """Scale the amplifier's input so that it sits ``backoff_db`` below the model's reference input.

    Parameters
    ----------
    bb : Baseband
        The exciter's output.
    model : Polynomial, Rapp or Saleh
        The amplifier; its ``input_reference_v`` is the input 1 dB compression
        point (Polynomial), A_sat / g (Rapp) or 1/sqrt(beta_a) (Saleh).
    backoff_db : float
        Input back-off, dB (negative: overdrive).
    reference : {"pep", "mean"}
        Whether the envelope peak or the RMS envelope is backed off.
    """
    _check_model(model)
    bo = require_finite("backoff_db", backoff_db)
    if reference == "pep":
        now_v = math.sqrt(2 * bb.pep_w)
    elif reference == "mean":
        now_v = math.sqrt(2 * bb.mean_power_w)
    else:
        raise ValueError(f"reference={format_value(reference)} is not 'pep' or 'mean'")
    if not now_v > 0:
        raise ValueError("the amplifier input has no power (all samples are zero)")
    want_v = model.input_reference_v * 10 ** (-bo / 20)
    return bb._replaced(bb.iq * (want_v / now_v), f"driven {bo:g} dB below the amplifier's reference input ({reference})")


@dataclass(frozen=True)
class Zones:
    """The amplifier's output, one :class:`Baseband` per zone (key n: zone around n x carrier)."""

    zones: dict[int, Baseband] = field(default_factory=dict)
    carrier_hz: float = 0.0

    @property
    def fundamental(self) -> Baseband:
        return self.zones[1]

    def __iter__(self):
        return iter(sorted(self.zones))

    def __getitem__(self, n: int) -> Baseband:
        return self.zones[n]


def amplify(bb: Baseband, model, *, max_harmonic: int = 10, oversample: int = 1,
            harmonics: Polynomial | None = None, output_filter: OutputFilter | None = None) -> Zones:
    """Pass ``bb`` through a memoryless amplifier and return its zones up to ``max_harmonic``.

    Parameters
    ----------
    bb : Baseband
        Amplifier input (after :func:`drive`, if a back-off is wanted).
    model : Polynomial, Rapp or Saleh
        The amplifier.
    max_harmonic : int
        Highest zone kept (10 for the 47 CFR 2.1057 search range).
    oversample : int
        Resampling factor applied first (on the DFT, exact for a periodic
        record): an order-k product is k times as wide as the signal, so
        the sample rate must hold the widest zone or it aliases into itself.
    harmonics : Polynomial, optional
        For the envelope models (Rapp, Saleh): the series whose zones 0 and
        2 and up are added (its zone 1 is ignored).  Not allowed with a
        Polynomial model, which makes its own harmonics.
    output_filter : OutputFilter, optional
        The harmonic low-pass, applied to every zone at that zone's RF frequencies.

    Returns
    -------
    Zones
        Zone n at carrier ``n * bb.carrier_hz``.
    """
    _check_model(model)
    if isinstance(max_harmonic, bool) or int(max_harmonic) != max_harmonic or max_harmonic < 1:
        raise ValueError(f"max_harmonic={format_value(max_harmonic)} is not an integer >= 1")
    if isinstance(oversample, bool) or int(oversample) != oversample or oversample < 1:
        raise ValueError(f"oversample={format_value(oversample)} is not an integer >= 1")
    if harmonics is not None and (isinstance(model, Polynomial) or not isinstance(harmonics, Polynomial)):
        raise ValueError("harmonics= takes a Polynomial, and only for a Rapp or Saleh model")
    nmax = int(max_harmonic)
    fs = bb.sample_rate_hz * int(oversample)
    iq = bb.iq if oversample == 1 else scipy.signal.resample(bb.iq, bb.iq.size * int(oversample))
    split = _split(math.sqrt(2.0) * iq)  # the envelope and its phasor, shared by the model and the harmonics
    # the zones come back divided by sqrt(2) (RF volts to the complex envelope), all but the DC zone
    out = model._zones(*split, nmax, divisor=math.sqrt(2.0))
    notes = [model.describe()]
    if harmonics is not None:
        for n, z in harmonics._zones(*split, nmax, skip=(1,), divisor=math.sqrt(2.0)).items():
            out[n] = out[n] + z if n in out else z
        notes.append("harmonics from " + harmonics.describe())
    if any(n >= 2 for n in out) and bb.carrier_hz < fs:
        raise ValueError(f"carrier_hz={bb.carrier_hz:g} is below the zone sample rate {fs:g} Hz, so the harmonic "
                         "zones would overlap (expected a carrier of at least the sample rate)")
    note = "; ".join(notes) + (f"; oversampled x{int(oversample)}" if oversample != 1 else "")
    zones = {}
    for n, z in sorted(out.items()):
        if n == 0:
            zones[0] = Baseband._adopt(np.real(z), fs, 0.0, bb.notes + (note + "; DC zone (real voltage)",))
        else:
            zones[n] = Baseband._adopt(z, fs, n * bb.carrier_hz, bb.notes + (note + f"; zone {n}",))
    result = Zones(zones, bb.carrier_hz)
    return result if output_filter is None else apply_output_filter(result, output_filter)


def apply_output_filter(zones: Zones, output_filter: OutputFilter) -> Zones:
    """Filter every zone by the analog low-pass at that zone's RF frequencies ``n fc + f``."""
    if not isinstance(output_filter, OutputFilter):
        raise ValueError(f"output_filter={format_value(output_filter)} is not an OutputFilter")
    out = {}
    for n, z in zones.zones.items():
        y = apply_response(z.iq, output_filter.bin_response(len(z), z.sample_rate_hz, z.carrier_hz))
        out[n] = z._replaced(y.real if n == 0 else y, output_filter.describe())
    return Zones(out, zones.carrier_hz)
