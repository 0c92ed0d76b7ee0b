"""Every physical constant and unit factor geomload uses, each defined once, in SI.

Derived units are built from the base ones, so a factor is never typed twice. Sources:
- standard gravity g0: 3rd CGPM (1901), exact by definition;
- international yard and pound (1959 agreement): 1 yd = 0.9144 m, 1 lb = 0.45359237 kg, exact;
- international nautical mile (1929): 1852 m, exact; knot = nautical mile per hour;
- ISA sea level: U.S. Standard Atmosphere 1976 (T0 = 288.15 K, p0 = 101 325 Pa,
  R = 287.05287 J/(kg K)), so rho0 = p0 / (R T0) = 1.2250 kg/m^3.
"""

from __future__ import annotations

# ------------------------------------------------------------------------------- base, exact
G0 = 9.80665  # m/s^2, standard acceleration of gravity (3rd CGPM 1901)
METRE = 1.0
KILOGRAM = 1.0
SECOND = 1.0
HOUR = 3600.0 * SECOND

# --------------------------------------------------------------------------------- lengths
MM = 1e-3 * METRE
CM = 1e-2 * METRE
INCH = 0.0254 * METRE  # international inch (1959), exact
FOOT = 0.3048 * METRE  # 12 inches, exact; written out so the float is the nearest to 0.3048
YARD = 3.0 * FOOT
NAUTICAL_MILE = 1852.0 * METRE  # international (1929), exact

# -------------------------------------------------------------------------- speeds, masses
KNOT = NAUTICAL_MILE / HOUR  # 0.514444... m/s
FOOT_PER_SECOND = FOOT / SECOND
POUND = 0.45359237 * KILOGRAM  # international avoirdupois pound (1959), exact
POUND_FORCE = POUND * G0  # 4.448... N
PSF = POUND_FORCE / FOOT**2  # N/m^2 per lbf/ft^2 (47.880...)

# --------------------------------------------------------------------- ISA sea level (1976)
R_AIR = 287.05287  # J/(kg K), R* / M0 of the 1976 standard
GAMMA_AIR = 1.4  # ratio of specific heats of air
T0_ISA = 288.15  # K
P0_ISA = 101325.0  # Pa
RHO0_ISA = P0_ISA / (R_AIR * T0_ISA)  # 1.2250 kg/m^3

# ---------------------------------------------------------------- unit names used in inputs
LENGTH_UNITS = {"m": METRE, "cm": CM, "mm": MM, "in": INCH, "ft": FOOT}
"""Length units a geometry file or case key may be given in, name -> metres."""
KM_PER_HOUR = 1000.0 * METRE / HOUR
MILE = 1760.0 * YARD  # international statute mile (1959), exact
MPH = MILE / HOUR
SPEED_UNITS = {"m/s": 1.0, "kt": KNOT}
SPEED_UNITS_TEXT = {"m/s": 1.0, "kt": KNOT, "km/h": KM_PER_HOUR, "mph": MPH}
"""Speed units a case-file value written as text (e.g. "52 kt") may carry, name -> m/s."""
MASS_UNITS = {"kg": KILOGRAM, "lb": POUND}
ALTITUDE_UNITS = {"m": METRE, "ft": FOOT}
GUST_UNITS = {"m/s": 1.0, "ft/s": FOOT_PER_SECOND}

__all__ = [name for name in dir() if name.isupper()]
