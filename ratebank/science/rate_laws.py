"""Every rate-law form a stored expression can have, evaluated by one function.

SI-molar and vectorized: T [K], the effective third-body concentration
M = [M]_eff [mol m^-3], energies [J mol^-1], each Arrhenius term a triple
(A, n, Ea) with k = A T^n exp(-Ea / (R T)). The forms (ratebank's names):

- ``arrhenius``:  k = A T^n exp(-Ea/RT), one term;
- ``sum``:        k = sum_i A_i T^n_i exp(-Ea_i/RT), two or more terms (channels one
  equation cannot separate);
- ``third-body``: k = k0 [M]_eff, the one term being k0;
- ``falloff``:    k = k_inf Pr/(1 + Pr) F, Pr = k0 [M]_eff / k_inf;
- ``activated``:  k = k0 /(1 + Pr) F;

the last three evaluated by :func:`ratebank.science.falloff.pressure_dependent_rate`
(Lindemann 1922; Gilbert, Luther & Troe 1983; the evaluation panels' fixed-Fc form).
An ``arrhenius`` or ``sum`` expression of a reaction written with M is a
third-body coefficient: given M, k is multiplied by it.

Without M a pressure-dependent form is read in its limit that needs no
pressure, which is what the expression states on its own: ``third-body``
gives its coefficient k0, ``falloff`` its high-pressure limit k_inf and
``activated`` its low-pressure limit k0 (:func:`pressure_free_rate`).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ratebank.errors import ScienceInputError
from ratebank.science.arrhenius import modified_arrhenius
from ratebank.science.falloff import FalloffRate, pressure_dependent_rate

__all__ = ["RATE_LAW_FORMS", "pressure_free_rate", "rate_law"]

#: Every form, in ratebank's names.
RATE_LAW_FORMS: tuple[str, ...] = ("arrhenius", "sum", "third-body", "falloff", "activated")

Triple = tuple[float, float, float]


def _terms_sum(T, terms: Sequence[Triple]) -> np.ndarray:
    T = np.asarray(T, dtype=float)
    total = np.zeros(T.shape)
    for A, n, Ea in terms:
        total = total + modified_arrhenius(T, A, n, Ea)
    return total


def _check(form: str, terms: Sequence[Triple], low: Triple | None) -> None:
    if form not in RATE_LAW_FORMS:
        raise ScienceInputError(
            f"Unknown rate-law form {form!r}; expected one of {', '.join(RATE_LAW_FORMS)}."
        )
    wanted = {"arrhenius": "one term", "third-body": "one term (k0)"}
    if form in wanted and len(terms) != 1:
        raise ScienceInputError(f"The {form} form has {wanted[form]}; got {len(terms)}.")
    if form == "sum" and len(terms) < 1:
        raise ScienceInputError("The sum form needs at least one term.")
    if form in ("falloff", "activated") and (len(terms) != 1 or low is None):
        raise ScienceInputError(
            f"The {form} form needs one high-pressure term and the low-pressure limit."
        )


def rate_law(T, form: str, terms: Sequence[Triple], *, low=None, broadening=None, M=None):
    """k(T, [M]_eff) of any rate-law form, with its parts.

    arrhenius / sum:  k = sum_i A_i T^n_i exp(-Ea_i/RT)   (times M when M is given)
    third-body:       k = k0 M
    falloff:          k = k_inf Pr/(1 + Pr) F,  Pr = k0 M / k_inf
    activated:        k = k0 /(1 + Pr) F

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    form : str
        One of :data:`RATE_LAW_FORMS`.
    terms : sequence of (A, n, Ea)
        The Arrhenius terms: the one term of ``arrhenius``, every term of
        ``sum``, k0 of ``third-body``, k_inf of ``falloff`` and ``activated``.
        A [k unit times K^-n], n [-], Ea [J mol^-1].
    low : (A, n, Ea), optional
        k0 of ``falloff`` and ``activated``.
    broadening : TroeBroadening or FixedCentreBroadening, optional
        F of ``falloff`` and ``activated``; None for Lindemann (F = 1).
    M : array_like, optional
        [M]_eff [mol m^-3], broadcast against T; required by ``falloff`` and
        ``activated``; for the other forms None means "the coefficient without M"
        (:func:`pressure_free_rate`).

    Returns
    -------
    FalloffRate
        (k, k0, k_inf, Pr, F); k0, k_inf and Pr are NaN where the form has none.

    Raises
    ------
    ScienceInputError
        For an unknown form, wrong terms, or a fall-off form without M.

    References
    ----------
    Lindemann, *Trans. Faraday Soc.* 1922, 17, 598; Gilbert, Luther & Troe,
    *Ber. Bunsenges. Phys. Chem.* 1983, 87, 169; Burkholder et al., JPL
    Publication 19-5 (2019).

    Examples
    --------
    Two channels add; at Pr = 1 a Lindemann fall-off is half of k_inf:

    >>> f"{rate_law(300.0, 'sum', [(1.0e6, 0.0, 0.0), (2.0e6, 0.0, 0.0)]).k:.3e}"
    '3.000e+06'
    >>> f"{rate_law(300.0, 'falloff', [(1.0e6, 0.0, 0.0)], low=(1.0e5, 0.0, 0.0), M=10.0).k:.3e}"
    '5.000e+05'
    """
    _check(form, terms, low)
    if form in ("falloff", "activated"):
        if M is None:
            raise ScienceInputError(
                f"The {form} form needs the effective third-body concentration (a pressure)."
            )
        return pressure_dependent_rate(T, M, form, low, terms[0], broadening)
    if form == "third-body" and M is not None:
        return pressure_dependent_rate(T, M, "third-body", terms[0])
    k = _terms_sum(T, terms)
    if M is not None:
        k = k * np.asarray(M, dtype=float)
    nan = np.full(np.shape(k), np.nan)
    k0 = k if form == "third-body" else nan
    return FalloffRate(k, k0, nan, nan, np.ones(np.shape(k)))


def pressure_free_rate(T, form: str, terms: Sequence[Triple], *, low=None):
    """k(T) an expression states without a pressure: the plain k of ``arrhenius`` and
    ``sum``, the coefficient k0 of ``third-body``, k_inf of ``falloff``, k0 of ``activated``.

    k_inf = A T^n exp(-Ea/RT) of the high-pressure term; k0 likewise of ``low``.

    Parameters
    ----------
    T : array_like
        Temperature [K].
    form, terms, low
        As for :func:`rate_law`.

    Returns
    -------
    numpy.ndarray
        k in the unit of the limit returned.

    Examples
    --------
    >>> f"{pressure_free_rate(300.0, 'activated', [(1.0e6, 0.0, 0.0)], low=(2.0e5, 0.0, 0.0)):.1e}"
    '2.0e+05'
    """
    _check(form, terms, low)
    if form == "activated":
        return _terms_sum(T, [low])
    return _terms_sum(T, terms)
