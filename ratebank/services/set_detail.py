"""One measurement set shown whole: metadata, points in its own units, the fits that used it
and whether anything in it is withdrawn."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import UnitError
from ratebank.science.pressure import bath_gas_concentration
from ratebank.science.units import parse_rate_unit
from ratebank.store.set_view import StoredSetView, set_view


@dataclass(frozen=True)
class SetDetail:
    """A stored set (``stored``: metadata, SI points, fits, withdrawal) with its rate
    constants in the unit the set was given in (``k_set_units``, in ``stored.original_k_units``)
    and its distinct pressures [Pa]."""

    stored: StoredSetView
    k_set_units: np.ndarray
    pressures: list[float]

    @property
    def name(self) -> str:
        return self.stored.name


def show_set(session: Session, name: str) -> SetDetail:
    """The measurement set ``name`` with its points and the fits that used it."""
    stored = set_view(session, name)
    pressure = stored.points.pressure
    pressures = sorted(set(pressure[np.isfinite(pressure)].tolist()))
    return SetDetail(stored, _in_set_units(stored), pressures)


def _in_set_units(stored: StoredSetView) -> np.ndarray:
    """k in the set's own unit. A set given as the effective k of a reaction written with M
    (one concentration fewer) is stored as k / [M]; it is shown as k [M] again, with
    [M] = P / (R T) at each point's pressure."""
    k = stored.points.rate_constant
    try:
        return k / parse_rate_unit(stored.original_k_units, order=stored.order).to_si
    except UnitError:
        if not stored.third_body:
            raise
    factor = parse_rate_unit(stored.original_k_units, order=stored.order - 1).to_si
    concentration = bath_gas_concentration(stored.points.pressure, stored.points.temperature)
    return k * concentration / factor
