"""International Standard Atmosphere (= U.S. Standard Atmosphere 1976) from -0.5 km to 20 km.

Altitudes are **geopotential** metres (H) unless stated: the 1976 standard defines its layers
in geopotential altitude, so the tables read directly in H. `geopotential_from_geometric` and
`geometric_from_geopotential` convert (effective Earth radius r0 = 6 356 766 m, U.S. Standard
Atmosphere 1976, eq. 18). Below 20 km the two differ by at most 63 m.

Layers used (U.S. Standard Atmosphere 1976, table 4): troposphere 0-11 km with lapse rate
-6.5 K/km from 288.15 K / 101 325 Pa; isothermal 216.65 K from 11 km to 20 km.
Viscosity by Sutherland's law with the 1976 constants (beta = 1.458e-6 kg/(m s K^0.5),
S = 110.4 K).
"""

from __future__ import annotations

import math
from dataclasses import dataclass


from geomload.errors import InputError
from geomload.units import G0, GAMMA_AIR as GAMMA, P0_ISA as P0, R_AIR, RHO0_ISA as RHO0, T0_ISA as T0
LAPSE = -0.0065  # K/m, 0..11 km geopotential
H_TROPOPAUSE = 11000.0  # m geopotential
T_TROPOPAUSE = T0 + LAPSE * H_TROPOPAUSE  # 216.65 K
P_TROPOPAUSE = P0 * (T_TROPOPAUSE / T0) ** (-G0 / (R_AIR * LAPSE))  # 22 632 Pa
H_MIN, H_MAX = -500.0, 20000.0  # m geopotential, range of validity of this model
R_EARTH = 6356766.0  # m, effective Earth radius for geopotential altitude (1976)


@dataclass(frozen=True)
class Atmosphere:
    """Atmospheric state: T (K), p (Pa), rho (kg/m^3), a (speed of sound, m/s),
    mu (dynamic viscosity, Pa s), h (geopotential altitude, m)."""

    T: float
    p: float
    rho: float
    a: float
    mu: float
    h: float


def geopotential_from_geometric(z_m: float) -> float:
    """Geopotential altitude H = r0 z / (r0 + z) (m) from geometric altitude z (m)."""
    return R_EARTH * z_m / (R_EARTH + z_m)


def geometric_from_geopotential(h_m: float) -> float:
    """Geometric altitude z = r0 H / (r0 - H) (m) from geopotential altitude H (m)."""
    return R_EARTH * h_m / (R_EARTH - h_m)


def _check_altitude(h_m) -> float:
    try:
        h = float(h_m)
    except (TypeError, ValueError):
        raise InputError(f"altitude: expected a number of metres, got {h_m!r}") from None
    if not math.isfinite(h) or h < H_MIN or h > H_MAX:
        raise InputError(
            f"altitude: {h_m!r} m is outside the ISA model range {H_MIN:g} m to {H_MAX:g} m"
        )
    return h


def isa(h_m: float) -> Atmosphere:
    """ISA state at geopotential altitude `h_m` (m), -500 m <= h <= 20 000 m.

    Troposphere: T = T0 + L h, p = p0 (T/T0)^(-g0/(R L)); stratosphere (isothermal):
    p = p11 exp(-g0 (h - 11 km) / (R T11)). rho = p/(R T), a = sqrt(gamma R T).
    Source: U.S. Standard Atmosphere 1976 (NOAA/NASA/USAF), eqs. 23, 33a, 33b, 42, 50, 51.

    Raises InputError naming the altitude when it is outside the range.
    """
    h = _check_altitude(h_m)
    if h <= H_TROPOPAUSE:
        T = T0 + LAPSE * h
        p = P0 * (T / T0) ** (-G0 / (R_AIR * LAPSE))
    else:
        T = T_TROPOPAUSE
        p = P_TROPOPAUSE * math.exp(-G0 * (h - H_TROPOPAUSE) / (R_AIR * T))
    rho = p / (R_AIR * T)
    a = math.sqrt(GAMMA * R_AIR * T)
    mu = 1.458e-6 * T**1.5 / (T + 110.4)
    return Atmosphere(T=T, p=p, rho=rho, a=a, mu=mu, h=h)


def _speed(v, name: str) -> float:
    try:
        v = float(v)
    except (TypeError, ValueError):
        raise InputError(f"{name}: expected a speed in m/s, got {v!r}") from None
    if not math.isfinite(v) or v < 0.0:
        raise InputError(f"{name}: speed must be finite and >= 0 m/s, got {v!r}")
    return v


def _state(h_m: float, atmosphere=None) -> tuple:
    return (atmosphere or density_and_sound)(h_m)


def tas_from_eas(v_eas: float, h_m: float, atmosphere=None) -> float:
    """True airspeed (m/s) from equivalent airspeed (m/s): V = V_e sqrt(rho0 / rho).
    atmosphere: callable h_m -> (rho, a); default ISA."""
    return _speed(v_eas, "EAS") * math.sqrt(RHO0 / _state(h_m, atmosphere)[0])


def eas_from_tas(v_tas: float, h_m: float, atmosphere=None) -> float:
    """Equivalent airspeed (m/s) from true airspeed (m/s): V_e = V sqrt(rho / rho0)."""
    return _speed(v_tas, "TAS") * math.sqrt(_state(h_m, atmosphere)[0] / RHO0)


def mach(v_tas: float, h_m: float, atmosphere=None) -> float:
    """Mach number V / a at geopotential altitude h (m)."""
    return _speed(v_tas, "TAS") / _state(h_m, atmosphere)[1]


def dynamic_pressure(v_tas: float, h_m: float, atmosphere=None) -> float:
    """Dynamic pressure q = rho V^2 / 2 (Pa) from true airspeed (m/s)."""
    return 0.5 * _state(h_m, atmosphere)[0] * _speed(v_tas, "TAS") ** 2


def density_and_sound(h_m: float) -> tuple:
    """(density kg/m^3, speed of sound m/s) at geopotential altitude h_m: the atmosphere form
    the pipeline passes to the stages (a callable h -> (rho, a))."""
    atm = isa(h_m)
    return float(atm.rho), float(atm.a)


def airspeeds(speed_m_s: float, speed_type: str, altitude_m: float, atmosphere=None) -> tuple:
    """(v_eas, v_tas) in m/s of a speed of kind speed_type ("EAS" or "TAS") at altitude_m:
    v_tas = v_eas sqrt(rho0 / rho(h)) (definition of equivalent airspeed).

    atmosphere: callable h_m -> (rho, a); default :func:`density_and_sound` (ISA).
    """
    if speed_type == "EAS":
        return speed_m_s, tas_from_eas(speed_m_s, altitude_m, atmosphere)
    return eas_from_tas(speed_m_s, altitude_m, atmosphere), speed_m_s


__all__ = [
    "density_and_sound", "airspeeds",
    "Atmosphere", "isa", "tas_from_eas", "eas_from_tas", "mach", "dynamic_pressure",
    "geopotential_from_geometric", "geometric_from_geopotential", "RHO0", "G0",
]
