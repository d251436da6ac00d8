"""Fit a pressure-dependent rate law (fall-off or chemically activated) to a reaction's points.

Every measured point of the reaction, across temperatures and pressures, enters
one weighted nonlinear least-squares fit in ln k
(:func:`ratebank.science.falloff.fit_falloff`). A point of a reaction written
with M is stored as the coefficient k / [M] with [M] = P / (R T) (its own
pressure and temperature), so the effective k it measured is that coefficient
times P / (R T); a point of an activated channel (written without M) is the
effective k itself. [M]_eff of a point is P / (R T) times the third-body
efficiency of its set's bath gas (default 1, said in the provenance).

The result is stored through the one expression write path: k_inf as the
expression's A, n, Ea, k0 as its low-pressure limit, the broadening's
parameters, with the covariance, the reduced chi-square and the panels'
(f(298), g) covering the fit's band over its temperatures and pressures.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import BadInputError, FitError
from ratebank.science.falloff import FalloffFit, fit_falloff
from ratebank.science.pressure import bath_gas_concentration
from ratebank.science.uncertainty import covering_panel_factor, scale_covariance_by_chi_square
from ratebank.store import queries
from ratebank.store.efficiencies import DEFAULT_EFFICIENCY, efficiencies_by_reaction
from ratebank.store.expressions import (
    ArrheniusTerm,
    Broadening,
    ExpressionRecord,
    write_expressions,
)
from ratebank.store.points import PointColumns, set_bath_gases
from ratebank.store.points import points as points_of
from ratebank.store.queries import ExpressionRow, ReactionRow

#: The pressure-dependent forms this fit gives, and what a reaction must be written as.
PRESSURE_FORMS = ("falloff", "activated")
#: Broadening names of the store and the science module's names for them.
BROADENINGS = {"none": "lindemann", "troe": "troe", "fixed-fc": "fixed-centre"}
#: The parameters of every law, then those of each broadening: (needed, optional).
LIMIT_PARAMETERS = ("A0", "n0", "Ea0", "A_inf", "n_inf", "Ea_inf")
BROADENING_PARAMETERS = {
    "none": ((), ()),
    "fixed-fc": (("Fc",), ("N",)),
    "troe": (("alpha", "T3", "T1"), ("T2",)),
}
_BAR = 1.0e5
_GRID = 25


@dataclass
class PressureFitReport:
    """One reaction's fall-off or activated fit (SI units; A0 in the reaction's k unit
    times K^-n0, A_inf with one concentration fewer)."""

    key: str
    equation: str
    order: int
    form: str
    broadening: str
    status: str  # "stored", or "unchanged" when the newest stored fit is this one
    parameters: dict[str, float]
    #: one standard deviation of each free parameter: of ln A0, ln A_inf, ln N, ln T3,
    #: ln T1, ln T2 (relative), of the others in their unit
    sigmas: dict[str, float]
    free: tuple[str, ...]
    fixed: dict[str, float]
    n_points: int
    n_sets: int
    n_temperatures: int
    n_pressures: int
    T_min: float
    T_max: float
    P_min: float
    P_max: float
    reduced_chi_square: float | None
    uncertainty_f298: float | None
    uncertainty_g: float | None
    weighted: bool
    warnings: list[str] = field(default_factory=list)
    expression_id: int | None = None


@dataclass(frozen=True)
class _Data:
    """The points of one reaction ready for the fit."""

    T: np.ndarray
    P: np.ndarray
    M_eff: np.ndarray
    k: np.ndarray
    sigma_ln_k: np.ndarray | None
    set_ids: list[int]
    efficiencies: dict[str, float]


def fit_pressure_dependence(
    session: Session,
    key: str,
    *,
    form: str = "falloff",
    broadening: str = "none",
    free: tuple[str, ...] = (),
    fixed: dict[str, float] | None = None,
) -> PressureFitReport:
    """Fit k0, k_inf and the broadening's free parameters of reaction ``key`` to all its
    points, and store the fit.

    ``form`` is ``falloff`` (a reaction written with M) or ``activated`` (written
    without M); ``broadening`` is ``none``, ``troe`` or ``fixed-fc``. Every needed
    parameter is fitted unless ``fixed`` gives its value; ``free`` names optional
    ones to fit too (``N`` of ``fixed-fc``, ``T2`` of ``troe``).
    """
    reaction = queries.find_reaction(session, key)
    fixed = dict(fixed or {})
    free_names = _free_parameters(reaction, form, broadening, tuple(free), fixed)
    data = _data(session, reaction, form)
    try:
        fit = fit_falloff(
            data.T,
            data.M_eff,
            data.k,
            data.sigma_ln_k,
            form=form,
            broadening=BROADENINGS[broadening],
            free=free_names,
            fixed=fixed,
        )
    except FitError as exc:
        raise FitError(f"{reaction.key}: {exc}") from None
    fit = _scaled(fit)
    report = _report(reaction, form, broadening, fit, data, fixed)
    provenance = _provenance(fit, data, report)
    previous = queries.newest_fits(session, [reaction.id]).get(reaction.id)
    if previous is not None and _same_fit(previous, report, provenance):
        report.status, report.expression_id = "unchanged", previous.id
        return report
    record = _record(reaction, report, fit, provenance, _references(session, data.set_ids))
    details = {"form": form, "broadening": broadening, "points": report.n_points}
    (report.expression_id,) = write_expressions(
        session, [record], action="fit", history=[(reaction.key, details)]
    )
    return report


def _free_parameters(
    reaction: ReactionRow, form: str, broadening: str, free: tuple[str, ...], fixed: dict
) -> tuple[str, ...]:
    """The parameters to fit: every needed one not fixed, and the optional ones named."""
    if form not in PRESSURE_FORMS:
        raise BadInputError(
            f"unknown pressure-dependent form {form!r}; expected one of "
            f"{', '.join(PRESSURE_FORMS)}",
            argument="form",
        )
    if form == "falloff" and not reaction.third_body:
        raise BadInputError(
            f"{reaction.key} ({reaction.equation}) is written without M; a falloff fit needs "
            "a reaction written with M (a chemically activated channel takes form activated)",
            argument="form",
        )
    if form == "activated" and reaction.third_body:
        raise BadInputError(
            f"{reaction.key} ({reaction.equation}) is written with M; an activated fit needs "
            "the channel written without M (a reaction with M takes form falloff)",
            argument="form",
        )
    if broadening not in BROADENINGS:
        raise BadInputError(
            f"unknown broadening {broadening!r}; expected one of {', '.join(BROADENINGS)}",
            argument="broadening",
        )
    needed, optional = BROADENING_PARAMETERS[broadening]
    for name in free:
        if name not in (*LIMIT_PARAMETERS, *needed, *optional):
            known = ", ".join((*LIMIT_PARAMETERS, *needed, *optional))
            raise BadInputError(
                f"{name!r} is not a parameter of the {form} form with broadening {broadening}; "
                f"its parameters are {known}",
                argument="free",
            )
    chosen = [n for n in (*LIMIT_PARAMETERS, *needed) if n not in fixed]
    return tuple(chosen + [n for n in free if n not in chosen])


def _data(session: Session, reaction: ReactionRow, form: str) -> _Data:
    """The reaction's points as effective k at [M]_eff; refused when a pressure is missing."""
    points = points_of(session, [reaction.id])
    if points.size == 0:
        raise FitError(f"{reaction.key}: no measured points to fit")
    missing = ~np.isfinite(points.pressure)
    if missing.any():
        sets = set_bath_gases(session, np.unique(points.set_id[missing]).tolist())
        labels = queries.set_labels(session, list(sets))
        raise FitError(
            f"{reaction.key}: {int(missing.sum())} of {points.size} points have no pressure "
            f"(sets {', '.join(sorted(labels.values()))}); a {form} fit needs the pressure of "
            "every point"
        )
    M = bath_gas_concentration(points.pressure, points.T)
    k = points.k * M if reaction.third_body else points.k
    set_ids = np.unique(points.set_id).tolist()
    baths = set_bath_gases(session, set_ids)
    stated = efficiencies_by_reaction(session, [reaction.id]).get(reaction.id, {})
    used = {bath or "": stated.get(bath or "", DEFAULT_EFFICIENCY) for bath in set(baths.values())}
    efficiency = np.array([used[baths[s] or ""] for s in points.set_id.tolist()])
    return _Data(
        points.T,
        points.pressure,
        M * efficiency,
        k,
        _sigma_ln_k(points),
        set_ids,
        used,
    )


def _sigma_ln_k(points: PointColumns) -> np.ndarray | None:
    """The stated relative uncertainties as sigma of ln k, when every point states one."""
    u = points.relative_uncertainty
    if np.isfinite(u).all() and (u > 0).all():
        return u
    return None


def _scaled(fit: FalloffFit) -> FalloffFit:
    """A weighted fit's covariance scaled by max(1, reduced chi-square), as Arrhenius fits."""
    if not fit.absolute_sigma:
        return fit
    scaled = scale_covariance_by_chi_square(fit.covariance, fit.reduced_chi_square)
    return dataclasses.replace(fit, covariance=scaled.covariance)


def _band(fit: FalloffFit, data: _Data) -> tuple[float | None, float | None]:
    """(f(298), g) covering sigma ln k over the fitted temperatures, at the worst of the
    measured [M]_eff (lowest, middle, highest) at each temperature."""
    T_min, T_max = float(data.T.min()), float(data.T.max())
    grid = 1.0 / np.linspace(1.0 / T_max, 1.0 / T_min, _GRID)
    if T_min < 298.0 < T_max:
        grid = np.sort(np.append(grid, 298.0))
    low, high = float(data.M_eff.min()), float(data.M_eff.max())
    M = np.array([low, math.sqrt(low * high), high])
    sigma = fit.sigma_ln_k(grid[:, None], M[None, :]).max(axis=1)
    if not np.isfinite(sigma).all():
        return None, None
    found = covering_panel_factor(grid, sigma)
    return float(found.f298), float(found.g)


def _report(
    reaction: ReactionRow, form: str, broadening: str, fit: FalloffFit, data: _Data, fixed: dict
) -> PressureFitReport:
    f298, g = _band(fit, data)
    sigmas = np.sqrt(np.maximum(np.diag(fit.covariance), 0.0))
    reduced = fit.reduced_chi_square
    return PressureFitReport(
        key=reaction.key,
        equation=reaction.equation,
        order=reaction.order,
        form=form,
        broadening=broadening,
        status="stored",
        parameters=dict(fit.parameters),
        sigmas={name: float(s) for name, s in zip(fit.fit_names, sigmas.tolist(), strict=True)},
        free=fit.free,
        fixed=fixed,
        n_points=fit.n_points,
        n_sets=len(data.set_ids),
        n_temperatures=int(np.unique(data.T).size),
        n_pressures=int(np.unique(data.P).size),
        T_min=float(data.T.min()),
        T_max=float(data.T.max()),
        P_min=float(data.P.min()),
        P_max=float(data.P.max()),
        reduced_chi_square=float(reduced) if math.isfinite(reduced) else None,
        uncertainty_f298=f298,
        uncertainty_g=g,
        weighted=fit.absolute_sigma,
        warnings=[w.message for w in fit.warnings],
    )


def _provenance(fit: FalloffFit, data: _Data, report: PressureFitReport) -> dict[str, Any]:
    return {
        "method": (
            "weighted nonlinear least squares in ln k over every point across T and P; "
            "covariance scaled by max(1, reduced chi-square)"
            if fit.absolute_sigma
            else "unweighted nonlinear least squares in ln k over every point across T and P "
            "(not every point states an uncertainty); covariance scaled by reduced chi-square"
        ),
        "form": report.form,
        "broadening": report.broadening,
        "free": list(fit.free),
        "fixed": report.fixed,
        "T_ref": fit.T_ref,
        "covariance": np.where(np.isfinite(fit.covariance), fit.covariance, 0.0).tolist(),
        "covariance_parameters": list(fit.fit_names),
        "absolute_sigma": fit.absolute_sigma,
        "reduced_chi_square": report.reduced_chi_square,
        "n_points": report.n_points,
        "n_sets": report.n_sets,
        "set_ids": data.set_ids,
        "temperatures": report.n_temperatures,
        "pressures": {
            "min_Pa": report.P_min,
            "max_Pa": report.P_max,
            "distinct": report.n_pressures,
        },
        "bath_gas_efficiencies": data.efficiencies,
        "efficiency_default": DEFAULT_EFFICIENCY,
        "warnings": [w.code for w in fit.warnings],
    }


def _same_fit(previous: ExpressionRow, report: PressureFitReport, provenance: dict) -> bool:
    """The newest stored fit is this one: same points, form, choices and numbers."""
    old = previous.provenance
    same_choice = all(
        old.get(name) == provenance[name]
        for name in ("form", "broadening", "free", "fixed", "set_ids", "n_points")
    )
    p = report.parameters
    return (
        same_choice
        and previous.A is not None
        and previous.A_low is not None
        and math.isclose(previous.A, p["A_inf"], rel_tol=1e-9)
        and math.isclose(previous.A_low, p["A0"], rel_tol=1e-9)
    )


def _record(
    reaction: ReactionRow,
    report: PressureFitReport,
    fit: FalloffFit,
    provenance: dict[str, Any],
    references: list[str],
) -> ExpressionRecord:
    p = fit.parameters
    kind = report.broadening
    broadening = Broadening(
        kind=kind,
        Fc=p.get("Fc") if kind == "fixed-fc" else None,
        N=p.get("N") if kind == "fixed-fc" else None,
        alpha=p.get("alpha"),
        T3=p.get("T3"),
        T1=p.get("T1"),
        T2=p.get("T2"),
    )
    return ExpressionRecord(
        reaction_id=reaction.id,
        origin="measured-fit",
        A=p["A_inf"],
        n=p["n_inf"],
        Ea=p["Ea_inf"],
        T_min=report.T_min,
        T_max=report.T_max,
        uncertainty_factor=report.uncertainty_f298,
        uncertainty_g=report.uncertainty_g,
        reference="; ".join(references),
        provenance=provenance,
        form=report.form,
        low_pressure=ArrheniusTerm(p["A0"], p["n0"], p["Ea0"], report.T_min, report.T_max),
        broadening=broadening,
        third_body=reaction.third_body,
    )


def _references(session: Session, set_ids: list[int]) -> list[str]:
    labels = queries.set_labels(session, set_ids)
    return [labels[s] for s in set_ids]
