"""The estimation windows (periodic), computed with numpy.

:func:`scipy.signal.get_window` gives these windows, but importing
:mod:`scipy.signal` takes about a second on a small machine (it loads
:mod:`scipy.stats`, :mod:`scipy.interpolate`, :mod:`scipy.optimize`), far
more than estimating a short recording.  The four windows the estimator
offers are short closed forms; :func:`window` evaluates them the way scipy
does (the same terms added in the same order, so the values are the same to
the last bit for the cosine sums), and the tests compare every one with
``scipy.signal.get_window(..., fftbins=True)``.

* Generalised cosine windows [1]_: ``w[n] = sum_k a_k cos(k x_n)`` with
  ``x_n`` spaced evenly over ``[-pi, pi]`` on ``N + 1`` points, the last one
  dropped (periodic, "DFT-even").  Hann: ``a = (0.5, 0.5)``; 4-term
  Blackman-Harris [2]_: ``(0.35875, 0.48829, 0.14128, 0.01168)``; flat top:
  the five coefficients scipy uses (``scipy.signal.windows.flattop``).
* Kaiser [3]_: ``w[n] = I0(beta sqrt(1 - ((n - a)/a)^2)) / I0(beta)``,
  ``a = N/2`` (periodic), with the modified Bessel function ``I0`` of
  :func:`scipy.special.i0` (a light import; only for this window).

References
----------
.. [1] A. Nuttall, "Some windows with very good sidelobe behavior",
       IEEE Trans. ASSP 29(1), 1981.
.. [2] F. J. Harris, "On the use of windows for harmonic analysis with the
       discrete Fourier transform", Proc. IEEE 66(1), 1978.
.. [3] J. F. Kaiser, "Nonrecursive digital filter design using the I0-sinh
       window function", Proc. IEEE ISCAS, 1974.
"""

from __future__ import annotations

import numpy as np

__all__ = ["window", "COSINE_COEFFICIENTS"]

#: coefficients a_k of the generalised cosine windows (the values scipy.signal.windows uses)
COSINE_COEFFICIENTS = {
    "hann": (0.5, 0.5),
    "blackmanharris": (0.35875, 0.48829, 0.14128, 0.01168),
    "flattop": (0.21557895, 0.41663158, 0.277263158, 0.083578947, 0.006947368),
}


def window(spec, n: int) -> np.ndarray:
    """The periodic window of length ``n`` for a spec ``"hann"`` ... or ``("kaiser", beta)``.

    Parameters
    ----------
    spec : str or tuple
        ``"hann"``, ``"blackmanharris"``, ``"flattop"`` or ``("kaiser", beta)``
        (the :func:`scipy.signal.get_window` spelling).
    n : int
        Window length, samples (>= 1).

    Returns
    -------
    ndarray, float64
        ``w[0..n-1]``, as ``scipy.signal.get_window(spec, n, fftbins=True)``.

    Examples
    --------
    >>> window("hann", 4)
    array([0. , 0.5, 1. , 0.5])
    """
    n = int(n)
    if n < 1:
        raise ValueError(f"{n=} is not a window length >= 1")
    name, args = (spec[0], tuple(spec[1:])) if isinstance(spec, tuple) else (spec, ())
    if n == 1:
        return np.ones(1)
    m = n + 1  # periodic: the symmetric window of n + 1 points without its last
    if name in COSINE_COEFFICIENTS and not args:
        fac = np.linspace(-np.pi, np.pi, m, dtype=np.float64)
        w = np.zeros(m, dtype=np.float64)
        for k, a in enumerate(COSINE_COEFFICIENTS[name]):
            w += a * np.cos(k * fac)
        return w[:-1]
    if name == "kaiser" and len(args) == 1:
        from scipy.special import i0

        beta = float(args[0])
        k = np.arange(0, m, dtype=np.float64)
        alpha = (m - 1) / 2.0
        w = i0(beta * np.sqrt(1 - ((k - alpha) / alpha) ** 2.0)) / i0(np.asarray(beta, dtype=np.float64))
        return w[:-1]
    raise ValueError(f"window {spec!r} is not one of {', '.join(COSINE_COEFFICIENTS)}, ('kaiser', beta)")
