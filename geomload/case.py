"""Old import path of the case file: kept so existing imports work. New code imports
:mod:`geomload.config` (records: ``geomload.config.schema``; reading:
``geomload.config.parse.read_case_file``; template: ``geomload.config.template``) and the
airspeed physics from :mod:`geomload.aero.atmosphere`."""

from __future__ import annotations

from .config.parse import LENGTH_UNITS, TOP_LEVEL_KEYS, read_case_file  # noqa: F401
from .config.schema import (CATEGORIES, MAX_ALTITUDE_M, AircraftSpec, Case,  # noqa: F401
                            EnvelopeSpec, FlightEnvelopeSpec, FuelTank, GeometrySpec, LatticeSpec,
                            LoadCase, SparSpec, WingMassSpec)
from .config.template import case_template
from .units import FOOT, GUST_UNITS, KNOT, SPEED_UNITS  # noqa: F401

load_case = read_case_file  # the earlier name


def template(geometry_path) -> str:
    """The commented case-file template for ``geometry_path`` (see config.template)."""
    return case_template(geometry_path)


def default_atmosphere(h_m: float):
    """(density kg/m^3, speed of sound m/s) at h_m from geomload's ISA."""
    from .aero.atmosphere import density_and_sound

    return density_and_sound(h_m)


def airspeeds(lc: LoadCase, atmosphere=None) -> tuple:
    """(v_eas, v_tas) in m/s of a load case (see aero.atmosphere.airspeeds)."""
    from .aero.atmosphere import airspeeds as _airspeeds

    return _airspeeds(lc.speed_m_s, lc.speed_type, lc.altitude_m, atmosphere)


def check_against_span(case: Case, semispan: float) -> None:
    """Raise CaseError when a spanwise position of the case lies beyond the semi-span (m)."""
    from .config.checks import check_against_wing

    check_against_wing(case, semispan)
