"""ISA checks against the U.S. Standard Atmosphere 1976 tables and the `ambiance` package."""

import math

import numpy as np
import pytest
from ambiance import Atmosphere

from geomload.aero import atmosphere as atm
from geomload.errors import InputError
from helpers.validation import check


@pytest.mark.parametrize("h, T, p, rho", [
    # U.S. Standard Atmosphere 1976, table I (geopotential altitude); VALIDATION.md item 6
    (0.0, 288.15, 101325.0, 1.2250),
    (11000.0, 216.65, 22632.0, 0.36392),
    # 20 km geopotential: table I lists 216.65 K, 5474.9 Pa, 0.088035 kg/m^3 (from memory)
    (20000.0, 216.65, 5474.9, 0.088035),
])
def test_isa_matches_1976_tables(h, T, p, rho):
    s = atm.isa(h)
    src = "U.S. Standard Atmosphere 1976, table I" + (", from memory" if h == 20000.0 else "")
    check(src, f"temperature at H = {h:g} m (K)", T, s.T, abs=0.01)
    check(src, f"pressure at H = {h:g} m (Pa)", p, s.p, rel=2e-4)
    check(src, f"density at H = {h:g} m (kg/m^3)", rho, s.rho, rel=2e-4)


def test_sea_level_speed_of_sound_and_viscosity():
    # 1976 table: a0 = 340.294 m/s, mu0 = 1.7894e-5 Pa s (from memory)
    s = atm.isa(0.0)
    src = "U.S. Standard Atmosphere 1976, from memory"
    check(src, "sea-level speed of sound (m/s)", 340.294, s.a, abs=0.01)
    check(src, "sea-level dynamic viscosity (Pa s)", 1.7894e-5, s.mu, rel=1e-3)


@pytest.mark.parametrize("h", [-500.0, 0.0, 1234.0, 6000.0, 10999.0, 11000.0, 15500.0, 20000.0])
def test_isa_matches_ambiance(h):
    # second reference: the registry package `ambiance` (takes geometric altitude)
    ref = Atmosphere(atm.geometric_from_geopotential(h))
    s = atm.isa(h)
    src = "ambiance package (U.S. Standard Atmosphere 1976)"
    check(src, f"temperature at H = {h:g} m (K)", float(ref.temperature[0]), s.T, rel=1e-6)
    check(src, f"pressure at H = {h:g} m (Pa)", float(ref.pressure[0]), s.p, rel=1e-5)
    check(src, f"density at H = {h:g} m (kg/m^3)", float(ref.density[0]), s.rho, rel=1e-5)
    check(src, f"speed of sound at H = {h:g} m (m/s)", float(ref.speed_of_sound[0]), s.a, rel=1e-6)
    check(src, f"dynamic viscosity at H = {h:g} m (Pa s)", float(ref.dynamic_viscosity[0]), s.mu,
          rel=1e-4)


def test_geopotential_conversion_round_trip():
    # H = r0 z / (r0 + z), r0 = 6 356 766 m (1976 standard; r0 from memory): 20 km geometric
    # is 19 937.3 m geopotential
    r0 = 6356766.0
    check("U.S. Standard Atmosphere 1976, H = r0 z / (r0 + z), r0 from memory",
          "geopotential altitude of z = 20 km geometric (m)", r0 * 20000.0 / (r0 + 20000.0),
          atm.geopotential_from_geometric(20000.0), abs=0.5)
    # internal consistency (no outside source): the two conversions are inverses
    z = atm.geometric_from_geopotential(12345.0)
    assert atm.geopotential_from_geometric(z) == pytest.approx(12345.0, abs=1e-6)


def test_speeds_and_dynamic_pressure():
    h = 3000.0
    s = atm.isa(h)
    v = atm.tas_from_eas(50.0, h)
    # definition of EAS: 0.5 rho V^2 = 0.5 rho0 Ve^2
    check("definition of EAS, 0.5 rho V^2 = 0.5 rho0 Ve^2", "dynamic pressure at EAS 50 m/s (Pa)",
          0.5 * 1.225 * 50.0**2, atm.dynamic_pressure(v, h), rel=1e-4)
    assert atm.eas_from_tas(v, h) == pytest.approx(50.0, rel=1e-12)  # inverse (consistency)
    check("a = sqrt(gamma R T), U.S. Standard Atmosphere 1976 constants",
          "Mach number at 3000 m, EAS 50 m/s (-)", v / math.sqrt(1.4 * 287.05287 * s.T),
          atm.mach(v, h), rel=1e-9)
    # TAS = EAS sqrt(rho0 / rho) > EAS where rho < rho0 (definition of EAS)
    assert v > 50.0


@pytest.mark.parametrize("h", [20000.1, -501.0, float("nan"), float("inf"), "high"])
def test_altitude_out_of_range(h):
    with pytest.raises(InputError, match="altitude"):
        atm.isa(h)


def test_negative_speed_rejected():
    with pytest.raises(InputError, match="TAS"):
        atm.mach(-1.0, 0.0)
    assert np.isfinite(atm.mach(np.float64(30.0), 100.0))
