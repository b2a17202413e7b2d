#!/usr/bin/env python3
"""Generate the baroz demo data from a physical model whose truth is known.

Every file under demo_data/ is written by this script, deterministically
(fixed seeds, fixed formatting), so a re-run reproduces them byte for byte.

    python3 tools/make_demo_data.py                 # write into demo_data/
    python3 tools/make_demo_data.py --out DIR       # write elsewhere
    python3 tools/make_demo_data.py --check         # regenerate into a temp
                                                    # dir, compare, exit 1 if
                                                    # anything differs
    python3 tools/make_demo_data.py --report        # also print the numerical
                                                    # error study

Pure Python 3.11 standard library. The model and its numerical error are
described in docs/demo-data.md.

Physical model (independent of the baroz C++ code): the hydrostatic equation
in GEOMETRIC height z,

    dp/dz = -p g(z) M0 / (R* T(z)),   g(z) = g0 (r0 / (r0 + z))^2,

is integrated with the classical fourth-order Runge-Kutta method on a fine
uniform grid from the site's ground pressure, and the resulting table
z -> ln p is inverted by linear interpolation in ln p to find the true height
of any pressure. For the standard atmosphere T(z) is the USSA76 molecular-scale
temperature T_M(H) at the geopotential height H = r0 z / (r0 + z). The
Kestrel-2 balloon flies a moist, non-standard atmosphere: there T is replaced
by the virtual temperature T_v(z, p) = T / [1 - (e/p)(1 - eps)] with
e = RH/100 f(p) e_w(T) (WMO-No. 8 Magnus over water and enhancement factor).
The Harrow Rise survey has a ground pressure that changes with time (a
synoptic fall plus micro-barometric waves) under a slowly warming column; the
drone's pressure is the pad pressure times the column ratio p(h)/p_pad, read
from two RK4 tables interpolated in 1/T_pad, and a base station on a clock
47.6 s behind the flight log records the same pad pressure moved up 4 m.

References
  U.S. Standard Atmosphere, 1976, NOAA-S/T 76-1562: constants g0, R*, M0, r0
    (as listed in shared/spec/reference-values.md 1.1), eq. 18 (H <-> Z),
    Table 4 (layers), eqs. 33a/33b (closed form used only as a check),
    Table I (check values).
  WMO-No. 8 (CIMO Guide), Vol. I, Annex 4.B, eq. 4.B.1 (saturation vapour
    pressure over water) and the enhancement factor f(p) - used for the
    Kestrel-2 atmosphere's virtual temperature.
  Wallace & Hobbs 2006, sec. 3.1 (virtual temperature, exact form).
"""

from __future__ import annotations

import argparse
import bisect
import calendar
import csv
import io
import json
import math
import os
import random
import shutil
import sys
import tempfile
import time as _time

# ---------------------------------------------------------------------------
# Constants (U.S. Standard Atmosphere 1976, reference-values.md section 1.1)
# ---------------------------------------------------------------------------
G0 = 9.80665          # m s^-2, standard gravity (exact)
RSTAR = 8.31432       # J mol^-1 K^-1, USSA76 universal gas constant
M0 = 0.0289644        # kg mol^-1, USSA76 sea-level mean molar mass
R0 = 6356766.0        # m, USSA76 effective Earth radius for H <-> Z
P0 = 101325.0         # Pa, USSA76 sea-level pressure
T0 = 288.15           # K, USSA76 sea-level temperature
KELVIN = 273.15       # K at 0 degC
M_WATER = 0.01801528  # kg mol^-1, molar mass of water (from memory)
EPSILON = M_WATER / M0  # = 0.62198, M_w / M_d = R_d / R_v (reference-values.md 4.1)

# WGS 84 ellipsoid (NIMA TR8350.2), used only to turn a local east/north track
# into latitude/longitude.
WGS84_A = 6378137.0
WGS84_F = 1.0 / 298.257223563

# USSA76 Table 4: base geopotential height H_b (m'), lapse rate L_b (K/m'),
# base molecular-scale temperature T_b (K). Top of the table 84 852 m'.
USSA76_LAYERS = (
    (0.0, -0.0065, 288.15),
    (11000.0, 0.0, 216.65),
    (20000.0, 0.0010, 216.65),
    (32000.0, 0.0028, 228.65),
    (47000.0, 0.0, 270.65),
    (51000.0, -0.0028, 270.65),
    (71000.0, -0.0020, 214.65),
)
USSA76_TOP_H = 84852.0

# USSA76 Table I (geometric altitude, metric), printed pressures, as
# transcribed in reference-values.md section 1.4. Printed values are
# truncated to 5 significant figures, hence the 1e-4 tolerance.
TABLE_I_PRESSURE = {1000.0: 89876.0, 11000.0: 22699.0, 20000.0: 5529.3, 32000.0: 889.06}
TABLE_I_TOLERANCE = 1e-4

LOG_EPOCH_FMT = "%Y-%m-%dT%H:%M:%SZ"


# ---------------------------------------------------------------------------
# Atmosphere
# ---------------------------------------------------------------------------
def geopotential_height(z: float) -> float:
    """Geopotential height H (m') of geometric height z (m). USSA76 eq. 18."""
    return R0 * z / (R0 + z)


def geometric_height(h: float) -> float:
    """Geometric height Z (m) of geopotential height H (m'). USSA76 eq. 18."""
    return R0 * h / (R0 - h)


# WGS 84 (NIMA TR8350.2, 3rd ed., Tables 3.1-3.4; reference-values.md 3.1).
WGS84_A = 6378137.0
WGS84_F = 1.0 / 298.257223563
WGS84_GAMMA_E = 9.7803253359
WGS84_K = 0.00193185265241
WGS84_E2 = 6.69437999014e-3
WGS84_M = 0.00344978650684


def wgs84_gravity(lat_deg: float, h: float) -> float:
    """WGS 84 normal gravity (m s^-2) at geodetic latitude lat_deg and height h
    (m) above the ellipsoid: Somigliana (TR8350.2 eq. 4-1) with the
    second-order free-air series (eq. 4-3). The demo takes MSL altitude as
    the ellipsoidal height (no geoid undulation)."""
    s2 = math.sin(math.radians(lat_deg)) ** 2
    g = WGS84_GAMMA_E * (1.0 + WGS84_K * s2) / math.sqrt(1.0 - WGS84_E2 * s2)
    return g * (1.0 - 2.0 / WGS84_A * (1.0 + WGS84_F + WGS84_M - 2.0 * WGS84_F * s2) * h
                + 3.0 / WGS84_A ** 2 * h * h)


def gravity(z: float) -> float:
    """Gravity (m s^-2) at geometric height z (m): inverse-square law with r0,
    the law underlying USSA76 eq. 18."""
    q = R0 / (R0 + z)
    return G0 * q * q


def ussa76_layer(h: float) -> tuple[float, float, float]:
    if h < -5000.0 or h > USSA76_TOP_H:
        raise ValueError(f"geopotential height {h} outside the 1976 standard")
    layer = USSA76_LAYERS[0]
    for lay in USSA76_LAYERS:
        if h >= lay[0]:
            layer = lay
        else:
            break
    return layer


def ussa76_temperature(z: float) -> float:
    """USSA76 molecular-scale temperature T_M (K) at geometric height z (m):
    T_M = T_b + L_b (H - H_b) (USSA76 Table 4 layers)."""
    h = geopotential_height(z)
    hb, lb, tb = ussa76_layer(h)
    return tb + lb * (h - hb)


def ussa76_closed_form_pressure(z: float) -> float:
    """USSA76 eqs. 33a/33b, used ONLY to measure the integrator's error.
    Base pressures are built up from P0 layer by layer."""
    h = geopotential_height(z)
    gmr = G0 * M0 / RSTAR
    pb = P0
    for i, (hb, lb, tb) in enumerate(USSA76_LAYERS):
        htop = USSA76_LAYERS[i + 1][0] if i + 1 < len(USSA76_LAYERS) else USSA76_TOP_H
        hh = min(h, htop)
        if lb == 0.0:
            p = pb * math.exp(-gmr * (hh - hb) / tb)                 # eq. 33b
        else:
            p = pb * (tb / (tb + lb * (hh - hb))) ** (gmr / lb)      # eq. 33a
        if h <= htop:
            return p
        pb = p
    raise ValueError("height above the 1976 standard")


def magnus_saturation_vapour_pressure_hpa(t_c: float) -> float:
    """WMO-No. 8, Annex 4.B, eq. 4.B.1 (over water): e_w = 6.112 exp(17.62 t /
    (243.12 + t)), hPa, t in degC. WMO practice reports RH over water also
    below 0 degC; below -45 degC this is an extrapolation (demo data only)."""
    return 6.112 * math.exp(17.62 * t_c / (243.12 + t_c))


def wmo_enhancement_factor(p_pa: float) -> float:
    """WMO-No. 8, Annex 4.B: f(p) = 1.0016 + 3.15e-6 p - 0.074 / p (p in hPa);
    the saturation vapour pressure of moist air is f(p) e_w."""
    p_hpa = p_pa / 100.0
    return 1.0016 + 3.15e-6 * p_hpa - 0.074 / p_hpa


def virtual_temperature(t_k: float, rh_pct: float, p_pa: float) -> float:
    """Virtual temperature (K) of air at t_k (K), relative humidity rh_pct
    (percent over water, WMO convention) and pressure p_pa (Pa), exact form
    T_v = T / [1 - (e/p)(1 - eps)] (Wallace & Hobbs 2006, sec. 3.1), with
    e = RH/100 f(p) e_w(T) (WMO-No. 8 Annex 4.B)."""
    e_pa = rh_pct / 100.0 * wmo_enhancement_factor(p_pa) \
        * magnus_saturation_vapour_pressure_hpa(t_k - KELVIN) * 100.0
    return t_k / (1.0 - e_pa / p_pa * (1.0 - EPSILON))


class PiecewiseLinear:
    """y(x) linear between the nodes (x ascending), constant beyond the ends."""

    def __init__(self, nodes: list[tuple[float, float]]):
        self.x = [a for a, _ in nodes]
        self.y = [b for _, b in nodes]

    def __call__(self, x: float) -> float:
        if x <= self.x[0]:
            return self.y[0]
        if x >= self.x[-1]:
            return self.y[-1]
        i = bisect.bisect_right(self.x, x) - 1
        x0, x1 = self.x[i], self.x[i + 1]
        return self.y[i] + (self.y[i + 1] - self.y[i]) * (x - x0) / (x1 - x0)


class HydrostaticColumn:
    """Table z -> ln p from RK4 integration of dp/dz = -p g(z) M0 / (R* T(z)).

    temperature: callable z (m, geometric MSL) -> K (the air temperature)
    z_ground, p_ground: start of the integration (m, Pa)
    z_top: end of the table (m); dz: step (m)
    The integration may also run downwards to z_bottom (< z_ground).
    virtual_temperature: optional callable (z, p) -> K for moist air; when
    given, it replaces T in the hydrostatic equation and in the density
    (rho = p M0 / (R* T_v)).
    """

    def __init__(self, temperature, z_ground: float, p_ground: float, z_top: float,
                 dz: float, z_bottom: float | None = None, virtual_temperature=None,
                 gravity_of=None):
        self.temperature = temperature
        self.virtual_temperature = virtual_temperature
        self.gravity_of = gravity_of
        self.dz = dz
        z_bottom = z_ground if z_bottom is None else z_bottom
        n_down = int(round((z_ground - z_bottom) / dz))
        n_up = int(round((z_top - z_ground) / dz))
        self.z_first = z_ground - n_down * dz
        up = self._integrate(z_ground, p_ground, dz, n_up)
        down = self._integrate(z_ground, p_ground, -dz, n_down)
        down.reverse()
        p = down[:-1] + up if n_down else up
        self.n = len(p)
        self.lnp = [math.log(v) for v in p]
        self.neg_lnp = [-v for v in self.lnp]          # ascending with z

    def _integrate(self, z0: float, p0: float, h: float, n: int) -> list[float]:
        t_of = self.temperature
        tv_of = self.virtual_temperature
        g_of = self.gravity_of if self.gravity_of is not None else gravity
        m_over_r = M0 / RSTAR

        if tv_of is None:
            def f(z: float, p: float) -> float:
                # hydrostatic equation with the ideal-gas density p M0 / (R* T)
                return -p * m_over_r * g_of(z) / t_of(z)
        else:
            def f(z: float, p: float) -> float:
                # moist air: density p M0 / (R* T_v), T_v depends on p via e/p, f(p)
                return -p * m_over_r * g_of(z) / tv_of(z, p)

        out = [p0]
        p = p0
        for i in range(n):
            z = z0 + i * h
            k1 = f(z, p)
            k2 = f(z + 0.5 * h, p + 0.5 * h * k1)
            k3 = f(z + 0.5 * h, p + 0.5 * h * k2)
            k4 = f(z + h, p + h * k3)
            p = p + h * (k1 + 2.0 * k2 + 2.0 * k3 + k4) / 6.0     # classical RK4
            out.append(p)
        return out

    def node_z(self, i: int) -> float:
        return self.z_first + i * self.dz

    @property
    def z_last(self) -> float:
        return self.node_z(self.n - 1)

    def pressure(self, z: float) -> float:
        """True pressure (Pa) at geometric height z (m MSL): linear in ln p."""
        x = (z - self.z_first) / self.dz
        if x < -1e-9 or x > self.n - 1 + 1e-9:
            raise ValueError(f"height {z} m outside the table")
        i = min(max(int(math.floor(x)), 0), self.n - 2)
        frac = x - i
        return math.exp(self.lnp[i] + frac * (self.lnp[i + 1] - self.lnp[i]))

    def height(self, p: float) -> float:
        """Geometric height (m MSL) of pressure p (Pa): inverse, linear in ln p."""
        u = -math.log(p)
        if u < self.neg_lnp[0] - 1e-12 or u > self.neg_lnp[-1] + 1e-12:
            raise ValueError(f"pressure {p} Pa outside the table")
        i = bisect.bisect_right(self.neg_lnp, u) - 1
        i = min(max(i, 0), self.n - 2)
        a, b = self.neg_lnp[i], self.neg_lnp[i + 1]
        return self.node_z(i) + self.dz * (u - a) / (b - a)

    def density(self, z: float) -> float:
        """Air density (kg m^-3) at z: rho = p M0 / (R* T) (USSA76 eq. 42),
        with T_v in place of T for moist air."""
        p = self.pressure(z)
        if self.virtual_temperature is None:
            return p * M0 / (RSTAR * self.temperature(z))
        return p * M0 / (RSTAR * self.virtual_temperature(z, p))


def standard_column(dz: float) -> HydrostaticColumn:
    """USSA76 integrated from 0 m, 101325 Pa, up to 32.5 km geometric."""
    return HydrostaticColumn(ussa76_temperature, 0.0, P0, 32500.0, dz)


# ---------------------------------------------------------------------------
# Numerical checks
# ---------------------------------------------------------------------------
def check_table_i(col: HydrostaticColumn) -> dict:
    """Assert that the integrator reproduces USSA76 Table I to 1e-4."""
    result = {}
    for z, printed in TABLE_I_PRESSURE.items():
        rel = col.pressure(z) / printed - 1.0
        result[z] = rel
        if abs(rel) > TABLE_I_TOLERANCE:
            raise AssertionError(f"table I check failed at {z} m: relative error {rel:.3e}")
    return result


def numerical_study(col: HydrostaticColumn, fine: HydrostaticColumn,
                    closed_form=None, probe_step: int = 37) -> dict:
    """Compare a table with the table of half the step.

    integration: max |ln p_coarse - ln p_fine| at the common nodes (relative p);
    interpolation: heights of the fine table's mid-nodes (odd indices, not nodes
    of the coarse table) recovered from the coarse table, max |dz| in m, and
    pressures at those heights, max relative.
    closed_form: optional exact p(z) to compare both tables with.
    """
    max_int = 0.0
    for i in range(col.n):
        d = abs(col.lnp[i] - fine.lnp[2 * i])
        max_int = max(max_int, d)
    max_dz = 0.0
    max_dp = 0.0
    for j in range(1, fine.n - 1, 2 * probe_step):
        z = fine.node_z(j)
        p = math.exp(fine.lnp[j])
        max_dz = max(max_dz, abs(col.height(p) - z))
        max_dp = max(max_dp, abs(col.pressure(z) / p - 1.0))
    out = {"dz": col.dz, "halving_max_rel_p": max_int,
           "interp_max_abs_z_m": max_dz, "interp_max_rel_p": max_dp}
    if closed_form is not None:
        worst_c = 0.0
        worst_f = 0.0
        for i in range(0, col.n, 10):
            z = col.node_z(i)
            exact = math.log(closed_form(z))
            worst_c = max(worst_c, abs(col.lnp[i] - exact))
            worst_f = max(worst_f, abs(fine.lnp[2 * i] - exact))
        out["closed_form_max_rel_p"] = worst_c
        out["closed_form_max_rel_p_half_step"] = worst_f
    # height error corresponding to the relative pressure error: dz = H_s dp/p
    out["halving_max_abs_z_m"] = max_int * RSTAR * 300.0 / (G0 * M0)
    return out


# ---------------------------------------------------------------------------
# Formatting helpers (locale independent, no "-0.00")
# ---------------------------------------------------------------------------
def fmt(x: float, nd: int) -> str:
    s = f"{x:.{nd}f}"
    if s.startswith("-") and float(s) == 0.0:
        s = s[1:]
    return s


def utc_string(epoch_s: float, frac_digits: int = 0) -> str:
    whole = math.floor(epoch_s)
    base = _time.strftime("%Y-%m-%dT%H:%M:%S", _time.gmtime(whole))
    if frac_digits:
        frac = f"{epoch_s - whole:.{frac_digits}f}"
        if frac.startswith("1"):          # rounding carried into the next second
            base = _time.strftime("%Y-%m-%dT%H:%M:%S", _time.gmtime(whole + 1))
            frac = "0." + "0" * frac_digits
        base += frac[1:]
    return base + "Z"


def epoch(y: int, mo: int, d: int, h: int, mi: int, s: int) -> int:
    return calendar.timegm((y, mo, d, h, mi, s, 0, 0, 0))


def local_to_latlon(lat0: float, lon0: float, east: float, north: float) -> tuple[float, float]:
    """Local tangent-plane offsets (m) to latitude/longitude (deg) with the
    WGS 84 meridian and prime-vertical radii of curvature at lat0 (adequate
    for a few km)."""
    phi = math.radians(lat0)
    e2 = WGS84_F * (2.0 - WGS84_F)
    w = math.sqrt(1.0 - e2 * math.sin(phi) ** 2)
    m_radius = WGS84_A * (1.0 - e2) / w ** 3
    n_radius = WGS84_A / w
    return (lat0 + math.degrees(north / m_radius),
            lon0 + math.degrees(east / (n_radius * math.cos(phi))))


def smoothstep(x: float, a: float, b: float) -> float:
    s = min(max((x - a) / (b - a), 0.0), 1.0)
    return s * s * (3.0 - 2.0 * s)


class Writer:
    """Collects the generated files (relative path -> bytes)."""

    def __init__(self):
        self.files: dict[str, bytes] = {}
        self.rows: dict[str, int] = {}
        self.doc_comment = ""

    def put(self, rel: str, data: bytes, rows: int | None = None):
        self.files[rel] = data
        if rows is not None:
            self.rows[rel] = rows


# ---------------------------------------------------------------------------
# Scenario 1: Kestrel-2 balloon flight (moist, non-standard atmosphere)
# ---------------------------------------------------------------------------
KESTREL_START = epoch(2026, 5, 16, 8, 40, 0)
KESTREL_SITE_LAT = 40.35214      # invented field, inland mid-latitude
KESTREL_SITE_LON = -87.94537
KESTREL_Z_LAUNCH = 212.0
KESTREL_Z_LAND = 172.0
KESTREL_P_LAUNCH = 98950.0       # Pa, true pressure at the launch point (212 m)

# Air temperature (degC) vs geometric height (m MSL) of a warm late-spring
# day at an inland mid-latitude site, linear between the nodes (all on whole
# metres, i.e. on the 1 m integration grid): a shallow surface inversion
# (24.0 degC at the 212 m site, +3 K by 512 m; colder air pooled below the
# site), a well-mixed residual boundary layer to 1.9 km capped by a weak
# inversion, a free troposphere of 7.2 ... 7.8 K/km, the tropopause at
# 12.5 km at -58 degC, a nearly isothermal lower stratosphere and a warming
# of 1.8 K/km (20-26 km) and 2.3 K/km (26-32.5 km) above.
KESTREL_TEMPERATURE_NODES = [
    (0.0, 21.0), (212.0, 24.0), (300.0, 25.4), (400.0, 26.5), (512.0, 27.0),
    (1900.0, 16.8), (2150.0, 18.0), (5000.0, -2.5), (8000.0, -24.0),
    (10500.0, -42.5), (12500.0, -58.0), (14000.0, -58.6), (17000.0, -57.8),
    (20000.0, -56.0), (26000.0, -45.2), (32500.0, -30.25),
]
# Relative humidity (percent over water, WMO convention) vs geometric height
# (m MSL): a moist boundary layer (80 % at the site, drier in the warm
# inversion top, 85 % under the capping inversion), a drier free troposphere
# and a very dry stratosphere.
KESTREL_RH_NODES = [
    (0.0, 84.0), (212.0, 80.0), (512.0, 64.0), (1200.0, 72.0), (1900.0, 85.0),
    (2150.0, 45.0), (3000.0, 40.0), (5000.0, 35.0), (8000.0, 30.0),
    (10500.0, 28.0), (12500.0, 20.0), (14000.0, 6.0), (17000.0, 2.5),
    (32500.0, 1.5),
]
_kestrel_t_c = PiecewiseLinear(KESTREL_TEMPERATURE_NODES)
_kestrel_rh = PiecewiseLinear(KESTREL_RH_NODES)


def kestrel_temperature(z: float) -> float:
    """True air temperature (K) of the Kestrel-2 day at geometric height z (m MSL)."""
    return _kestrel_t_c(z) + KELVIN


def kestrel_rh_percent(z: float) -> float:
    """True relative humidity (percent over water) at geometric height z (m MSL)."""
    return _kestrel_rh(z)


def kestrel_virtual_temperature(z: float, p: float) -> float:
    """True virtual temperature (K) at geometric height z (m MSL) and pressure p (Pa)."""
    return virtual_temperature(kestrel_temperature(z), kestrel_rh_percent(z), p)


def kestrel_column(dz: float) -> HydrostaticColumn:
    """The Kestrel-2 day integrated from the launch point (212 m, 98 950 Pa)
    up to 32.5 km and down to 0 m, with the virtual temperature and the real
    (WGS 84 normal) gravity of the launch site's latitude, as a balloon at
    40.35 N feels it."""
    return HydrostaticColumn(kestrel_temperature, KESTREL_Z_LAUNCH, KESTREL_P_LAUNCH, 32500.0,
                             dz, z_bottom=0.0, virtual_temperature=kestrel_virtual_temperature,
                             gravity_of=lambda z: wgs84_gravity(KESTREL_SITE_LAT, z))


def kestrel_wind(z: float) -> tuple[float, float]:
    """Wind SHAPE (east, north components, m/s, towards) before scaling:
    light tropospheric westerlies with a weak jet near the tropopause, the
    late-spring stratospheric easterlies above ~20 km."""
    zk = z / 1000.0
    east = 2.0 + 7.0 * math.exp(-((zk - 10.5) / 3.5) ** 2) - 8.0 * smoothstep(zk, 16.0, 23.0)
    north = 1.2 * math.exp(-((zk - 6.0) / 4.0) ** 2) - 0.6 * smoothstep(zk, 18.0, 26.0)
    return east, north


def make_kestrel(std: HydrostaticColumn, col: HydrostaticColumn, w: Writer) -> dict:
    """std: the standard atmosphere (for the standard height of the logged
    pressure); col: the true atmosphere of the day (kestrel_column)."""
    dt = 0.1                       # s, fine simulation step
    sub = 20                       # 2 s log interval = 20 fine steps
    t_launch = 600.0               # 10 min on the ground before launch
    rng_flight = random.Random(1601)
    z_burst = 30500.0 + rng_flight.uniform(-60.0, 60.0)
    v0_descent = 5.5               # m/s terminal speed at the landing site
    v_cap = 40.0                   # m/s cap of the descent speed just after burst
    rho_land = col.density(KESTREL_Z_LAND)

    tau_ext = 6.0                  # s, external probe time constant
    tau_rh = 8.0                   # s, humidity sensor time constant
    tau_box = 2400.0               # s, payload box thermal time constant
    a_ext = 1.0 - math.exp(-dt / tau_ext)
    a_rh = 1.0 - math.exp(-dt / tau_rh)
    a_box = 1.0 - math.exp(-dt / tau_box)
    tau_gust = 20.0
    sig_gust = 0.35                # m/s, ascent-rate fluctuation
    g_ar = math.exp(-dt / tau_gust)
    g_sd = sig_gust * math.sqrt(1.0 - g_ar * g_ar)

    z = KESTREL_Z_LAUNCH
    vz = 0.0
    east = north = 0.0
    t_air = col.temperature(z)
    t_sensor = t_air
    rh_sensor = kestrel_rh_percent(z)
    t_box = 22.0 + KELVIN
    gust = 0.0
    phase = "ground"
    t_burst = t_land = None
    z_max = z
    samples = []                   # (t, z, east, north, t_air, t_sensor, t_box, rh)
    k = 0
    t_end = None
    while True:
        t = k / 10.0               # exact on the 2 s sample grid
        if k % sub == 0:
            if t_end is not None and t > t_end + 1e-9:
                break
            samples.append((t, z, east, north, col.temperature(z), t_sensor, t_box, rh_sensor))
        # --- advance one fine step from t to t + dt
        if phase == "ground" and t + 1e-9 >= t_launch:
            phase = "ascent"
        if phase == "ascent":
            gust = g_ar * gust + g_sd * rng_flight.gauss(0.0, 1.0)
            mean_rate = 4.85 + 0.01 * (z - KESTREL_Z_LAUNCH) / 1000.0
            ramp = 1.0 - math.exp(-(t - t_launch) / 2.0)
            vz = (mean_rate + gust) * ramp
            z_new = z + vz * dt
            if z_new >= z_burst:
                frac = (z_burst - z) / (z_new - z)
                t_burst = t + frac * dt
                z_new = z_burst
                phase = "descent"
            z = z_new
        elif phase == "descent":
            # quadratic drag with terminal speed v_t = v0 sqrt(rho_land / rho)
            vt = min(v_cap, v0_descent * math.sqrt(rho_land / col.density(z)))
            acc = -G0 - G0 * vz * abs(vz) / (vt * vt)
            vz = vz + acc * dt
            z_new = z + vz * dt
            if z_new <= KESTREL_Z_LAND:
                frac = (z - KESTREL_Z_LAND) / (z - z_new)
                t_land = t + frac * dt
                z_new = KESTREL_Z_LAND
                vz = 0.0
                phase = "landed"
                t_end = math.floor((t_land + 300.0) / 2.0) * 2.0
            z = z_new
        if phase in ("ascent", "descent"):
            we, wn = kestrel_wind(z)
            east += we * dt
            north += wn * dt
        z_max = max(z_max, z)
        # sensors (first-order lags, exact discretisation)
        t_air = col.temperature(z)
        t_sensor += a_ext * (t_air - t_sensor)
        rh_sensor += a_rh * (kestrel_rh_percent(z) - rh_sensor)
        # payload box: electronics dissipate; less convective cooling in thin air
        rho_ratio = col.density(z) / rho_land
        if phase in ("ground", "landed"):
            box_eq = t_air + 7.5
        else:
            box_eq = t_air + 7.5 + 55.0 * (1.0 - rho_ratio)
        t_box += a_box * (box_eq - t_box)
        k += 1

    # scale the wind shape so that the landing point is 6.000 km from launch
    d_land = math.hypot(samples[-1][2], samples[-1][3])
    scale = 6000.0 / d_land

    rng_p = random.Random(1602)
    rng_t = random.Random(1603)
    rng_gps = random.Random(1604)
    rng_rh = random.Random(1605)
    rng_box = random.Random(1606)
    log = io.StringIO(newline="")
    truth = io.StringIO(newline="")
    log.write("utc,pressure_pa,temp_ext_c,temp_int_c,rh_pct,gps_lat,gps_lon,gps_alt_m\n")
    truth.write("utc,true_height_m,true_altitude_m,true_pressure_pa,true_temperature_c,"
                "standard_height_of_logged_pressure_m,true_rh_pct,true_virtual_temperature_c\n")
    max_sample = (-1e9, 0.0)
    # the standard atmosphere's geometric altitude of the true launch pressure:
    # a standard-model run referenced to the launch point measures from there
    z_std_launch = std.height(KESTREL_P_LAUNCH)
    for (t, zs, e, n, ta, ts, tb, rh) in samples:
        utc = utc_string(KESTREL_START + t)
        p_true = col.pressure(zs)
        p_log = int(round(p_true + rng_p.gauss(0.0, 1.5)))
        temp_ext = ts - KELVIN + rng_t.gauss(0.0, 0.15)
        temp_int = tb - KELVIN + rng_box.gauss(0.0, 0.05)
        rh_log = min(100.0, max(0.0, rh + rng_rh.gauss(0.0, 0.6)))
        ge, gn, ga = rng_gps.gauss(0.0, 2.0), rng_gps.gauss(0.0, 2.0), rng_gps.gauss(0.0, 4.0)
        if t < 45.0:
            gps = ",,"
        else:
            lat, lon = local_to_latlon(KESTREL_SITE_LAT, KESTREL_SITE_LON,
                                       e * scale + ge, n * scale + gn)
            gps = f"{fmt(lat, 5)},{fmt(lon, 5)},{fmt(zs + ga, 1)}"
        log.write(f"{utc},{p_log},{fmt(temp_ext, 2)},{fmt(temp_int, 1)},{fmt(rh_log, 1)},{gps}\n")
        z_std = std.height(float(p_log))
        rh_true = kestrel_rh_percent(zs)
        tv_true = virtual_temperature(ta, rh_true, p_true)
        truth.write(f"{utc},{fmt(zs - KESTREL_Z_LAUNCH, 3)},{fmt(zs, 3)},{fmt(p_true, 3)},"
                    f"{fmt(ta - KELVIN, 3)},{fmt(z_std - z_std_launch, 3)},"
                    f"{fmt(rh_true, 2)},{fmt(tv_true - KELVIN, 3)}\n")
        if zs > max_sample[0]:
            max_sample = (zs, t)
    n_rows = len(samples)
    w.put("kestrel2_balloon.csv", log.getvalue().encode("utf-8"), n_rows)
    w.put("truth/kestrel2_balloon_truth.csv", truth.getvalue().encode("utf-8"), n_rows)

    tsec = [s[0] for s in samples]
    box_c = [s[6] - KELVIN for s in samples]

    # How much lower a hypsometric integration of the air temperature alone
    # (humidity ignored) puts the burst: dz_dry = (T / T_v) dz, so the deficit
    # is the integral of (1 - T/T_v) dz from the launch point to the burst
    # (trapezoid on the 1 m grid; g(z) is the same for both).
    def dry_ratio(zz: float) -> float:
        return 1.0 - col.temperature(zz) / col.virtual_temperature(zz, col.pressure(zz))

    n_grid = int(math.floor(z_burst - KESTREL_Z_LAUNCH))
    nodes = [KESTREL_Z_LAUNCH + i for i in range(n_grid + 1)] + [z_burst]
    dry_deficit = 0.0
    prev_z, prev_r = nodes[0], dry_ratio(nodes[0])
    for zz in nodes[1:]:
        r = dry_ratio(zz)
        dry_deficit += 0.5 * (r + prev_r) * (zz - prev_z)
        prev_z, prev_r = zz, r

    # Sea-level pressure for which the standard atmosphere puts the launch
    # point at 212 m (the ICAO QNH definition): inverse of USSA76 eq. 33a in
    # the lowest layer at H = geopotential of 212 m.
    qnh = KESTREL_P_LAUNCH / (1.0 - 0.0065 * geopotential_height(KESTREL_Z_LAUNCH) / T0) \
        ** (G0 * M0 / (RSTAR * 0.0065))
    tv_launch = col.virtual_temperature(KESTREL_Z_LAUNCH, KESTREL_P_LAUNCH)
    ev = {
        "log_start_time": utc_string(KESTREL_START),
        "log_end_time": utc_string(KESTREL_START + tsec[-1]),
        "duration_s": tsec[-1],
        "rows": n_rows,
        "interval_s": 2.0,
        "launch_site": {"lat": KESTREL_SITE_LAT, "lon": KESTREL_SITE_LON,
                        "elevation_m": KESTREL_Z_LAUNCH,
                        "pressure_pa": KESTREL_P_LAUNCH,
                        "temperature_c": round(kestrel_temperature(KESTREL_Z_LAUNCH) - KELVIN, 3),
                        "rh_pct": round(kestrel_rh_percent(KESTREL_Z_LAUNCH), 2),
                        "virtual_temperature_c": round(tv_launch - KELVIN, 3),
                        "qnh_pa": round(qnh, 3),
                        "standard_pressure_pa": round(std.pressure(KESTREL_Z_LAUNCH), 3)},
        "atmosphere": {
            "kind": "moist, non-standard: piecewise-linear T(z) and RH(z) in geometric "
                    "height MSL, hydrostatic with the virtual temperature",
            "temperature_nodes_m_c": [[zz, tt] for zz, tt in KESTREL_TEMPERATURE_NODES],
            "rh_nodes_m_pct": [[zz, hh] for zz, hh in KESTREL_RH_NODES],
            "humidity": "RH over water; e = RH/100 f(p) e_w(T), WMO-No. 8 Annex 4.B eq. 4.B.1 "
                        "and f(p); T_v = T / (1 - (e/p)(1 - eps))",
            "epsilon": round(EPSILON, 8),
            "gravity": "WGS 84 normal gravity at the launch latitude, TR8350.2 eqs. 4-1 and 4-3 (MSL altitude taken as ellipsoidal height)",
            "tropopause_altitude_m": 12500.0,
            "tropopause_temperature_c": -58.0,
            "tropopause_pressure_pa": round(col.pressure(12500.0), 3),
        },
        "launch_time": utc_string(KESTREL_START + t_launch),
        "launch_elapsed_s": t_launch,
        "burst_time": utc_string(KESTREL_START + t_burst, 1),
        "burst_elapsed_s": round(t_burst, 1),
        "burst_altitude_m": round(z_burst, 3),
        "burst_height_m": round(z_burst - KESTREL_Z_LAUNCH, 3),
        "burst_pressure_pa": round(col.pressure(z_burst), 3),
        "burst_temperature_c": round(kestrel_temperature(z_burst) - KELVIN, 3),
        "burst_geopotential_altitude_m": round(geopotential_height(z_burst), 3),
        "max_sampled_altitude_m": round(max_sample[0], 3),
        "max_sampled_height_m": round(max_sample[0] - KESTREL_Z_LAUNCH, 3),
        "max_sampled_elapsed_s": max_sample[1],
        "landing_time": utc_string(KESTREL_START + t_land, 1),
        "landing_elapsed_s": round(t_land, 1),
        "landing_elevation_m": KESTREL_Z_LAND,
        "landing_height_m": KESTREL_Z_LAND - KESTREL_Z_LAUNCH,
        "landing_distance_m": 6000.0,
        "landing_bearing_deg": round(math.degrees(math.atan2(samples[-1][2], samples[-1][3])) % 360.0, 1),
        "landing_site": dict(zip(("lat", "lon"), (round(v, 5) for v in local_to_latlon(
            KESTREL_SITE_LAT, KESTREL_SITE_LON, samples[-1][2] * scale, samples[-1][3] * scale)))),
        "mean_ascent_rate_mps": round((z_burst - KESTREL_Z_LAUNCH) / (t_burst - t_launch), 4),
        "mean_descent_rate_mps": round((z_burst - KESTREL_Z_LAND) / (t_land - t_burst), 4),
        "ascent_duration_s": round(t_burst - t_launch, 1),
        "descent_duration_s": round(t_land - t_burst, 1),
        "wind_scale": round(scale, 4),
        "temp_int_min_c": round(min(box_c), 2),
        "gps_first_fix_elapsed_s": 46.0,
        "dry_air_height_deficit_at_burst_m": round(dry_deficit, 2),
    }
    return ev


# ---------------------------------------------------------------------------
# Scenario 2: Hollin drone hop (warm troposphere, 10 Hz NDJSON)
# ---------------------------------------------------------------------------
HOLLIN_START_MS = epoch(2026, 8, 22, 10, 15, 0) * 1000
HOLLIN_Z = 148.0
HOLLIN_T_GROUND = 27.0 + KELVIN
HOLLIN_P_GROUND = 100240.0
HOLLIN_LAPSE = 0.0065          # K per geometric metre


def hollin_temperature(z: float) -> float:
    return HOLLIN_T_GROUND - HOLLIN_LAPSE * (z - HOLLIN_Z)


def trapezoid_move(h0: float, h1: float, vmax: float, acc: float):
    """Move from h0 to h1 with speed vmax and acceleration acc (trapezoidal
    velocity profile). Returns (duration, position function of local time)."""
    d = abs(h1 - h0)
    sgn = 1.0 if h1 >= h0 else -1.0
    t_acc = vmax / acc
    d_acc = 0.5 * acc * t_acc * t_acc
    if 2.0 * d_acc > d:
        t_acc = math.sqrt(d / acc)
        vmax = acc * t_acc
        d_acc = d / 2.0
    t_cruise = (d - 2.0 * d_acc) / vmax
    dur = 2.0 * t_acc + t_cruise

    def pos(t: float) -> float:
        if t <= 0.0:
            s = 0.0
        elif t < t_acc:
            s = 0.5 * acc * t * t
        elif t < t_acc + t_cruise:
            s = d_acc + vmax * (t - t_acc)
        elif t < dur:
            r = dur - t
            s = d - 0.5 * acc * r * r
        else:
            s = d
        return h0 + sgn * s

    return dur, pos


class Timeline:
    """Piecewise height profile built from holds and moves."""

    def __init__(self):
        self.segments = []         # (t_start, duration, function of local t)
        self.t = 0.0
        self.h = 0.0
        self.marks: dict[str, float] = {}

    def hold(self, dur: float):
        h = self.h
        self.segments.append((self.t, dur, lambda _t, h=h: h))
        self.t += dur

    def move(self, target: float, speed: float, acc: float):
        dur, pos = trapezoid_move(self.h, target, speed, acc)
        self.segments.append((self.t, dur, pos))
        self.t += dur
        self.h = target

    def linear(self, target: float, speed: float):
        h0 = self.h
        dur = abs(target - h0) / speed
        self.segments.append((self.t, dur, lambda t, h0=h0, d=target - h0, dur=dur:
                              h0 + d * min(max(t / dur, 0.0), 1.0)))
        self.t += dur
        self.h = target

    def mark(self, name: str):
        self.marks[name] = self.t

    def height(self, t: float) -> float:
        for (t0, dur, f) in self.segments:
            if t < t0 + dur:
                return f(t - t0)
        return self.h


def make_hollin(w: Writer, report: dict) -> dict:
    col = HydrostaticColumn(hollin_temperature, HOLLIN_Z, HOLLIN_P_GROUND, HOLLIN_Z + 200.0, 0.1)
    half = HydrostaticColumn(hollin_temperature, HOLLIN_Z, HOLLIN_P_GROUND, HOLLIN_Z + 200.0, 0.05)
    report["hollin"] = numerical_study(col, half)
    acc = 1.0                      # m s^-2, vertical acceleration of the drone
    tl = Timeline()
    tl.hold(30.0)
    tl.mark("takeoff")
    tl.move(120.0, 3.0, acc)
    tl.mark("top_reached")
    tl.hold(60.0)
    tl.mark("top_left")
    tl.move(60.0, 2.0, acc)
    tl.hold(20.0)
    tl.move(0.0, 2.0, acc)
    tl.mark("landing")
    tl.hold(20.0)
    total = tl.t
    n = int(math.floor(total * 10.0 + 1e-9)) + 1
    rng_p = random.Random(2201)
    rng_t = random.Random(2202)
    rng_g = random.Random(2203)
    dt = 0.1
    a_t = 1.0 - math.exp(-dt / 4.0)     # 4 s air-temperature sensor lag
    t_sensor = hollin_temperature(HOLLIN_Z)
    log = io.StringIO(newline="")
    truth = io.StringIO(newline="")
    truth.write("time_ms,true_height_m,true_pressure_pa,true_temperature_c\n")
    for i in range(n):
        t = i / 10.0
        h = tl.height(t)
        z = HOLLIN_Z + h
        p = col.pressure(z)
        ta = hollin_temperature(z)
        if i > 0:
            t_sensor += a_t * (ta - t_sensor)
        time_ms = HOLLIN_START_MS + 100 * i
        baro = p / 100.0 + rng_p.gauss(0.0, 0.04)
        temp = t_sensor - KELVIN + rng_t.gauss(0.0, 0.05)
        gnss = z + rng_g.gauss(0.0, 1.5)
        log.write(f'{{"time_ms":{time_ms}, "baro_hpa":{fmt(baro, 4)}, '
                  f'"air_temp_c":{fmt(temp, 2)}, "gnss_alt":{fmt(gnss, 2)}}}\n')
        truth.write(f"{time_ms},{fmt(h, 3)},{fmt(p, 3)},{fmt(ta - KELVIN, 3)}\n")
    w.put("hollin_drone_hop.ndjson", log.getvalue().encode("utf-8"), n)
    w.put("truth/hollin_drone_hop_truth.csv", truth.getvalue().encode("utf-8"), n)

    def t_ms(sec: float) -> int:
        return HOLLIN_START_MS + int(round(sec * 1000.0))

    return {
        "log_start_time_ms": HOLLIN_START_MS,
        "log_start_time": utc_string(HOLLIN_START_MS / 1000.0),
        "rows": n, "interval_s": 0.1, "duration_s": round((n - 1) * dt, 1),
        "site_elevation_m": HOLLIN_Z, "ground_pressure_pa": HOLLIN_P_GROUND,
        "ground_temperature_c": 27.0, "lapse_rate_k_per_m": HOLLIN_LAPSE,
        "launch_elapsed_s": tl.marks["takeoff"], "launch_time_ms": t_ms(tl.marks["takeoff"]),
        "apogee_reached_elapsed_s": round(tl.marks["top_reached"], 3),
        "apogee_left_elapsed_s": round(tl.marks["top_left"], 3),
        "max_height_m": 120.0,
        "landing_elapsed_s": round(tl.marks["landing"], 3),
        "landing_time_ms": t_ms(tl.marks["landing"]),
        "vertical_acceleration_mps2": acc,
        "pressure_at_max_height_pa": round(col.pressure(HOLLIN_Z + 120.0), 3),
    }


# ---------------------------------------------------------------------------
# Scenario 3: stairwell walk (isothermal indoor column, phone export)
# ---------------------------------------------------------------------------
STAIR_Z = 35.0
STAIR_P = 100985.0
STAIR_T = 21.0 + KELVIN
STAIR_FLOOR_M = 3.1
STAIR_FLOORS = 14


def make_stairwell(w: Writer, report: dict) -> dict:
    def iso(_z: float) -> float:
        return STAIR_T

    col = HydrostaticColumn(iso, STAIR_Z, STAIR_P, STAIR_Z + 60.0, 0.1)
    half = HydrostaticColumn(iso, STAIR_Z, STAIR_P, STAIR_Z + 60.0, 0.05)

    def iso_exact(z: float) -> float:
        # isothermal layer, USSA76 eq. 33b form with T = 294.15 K
        return STAIR_P * math.exp(-G0 * M0 * (geopotential_height(z) - geopotential_height(STAIR_Z))
                                  / (RSTAR * STAIR_T))

    report["stairwell"] = numerical_study(col, half, closed_form=iso_exact)
    rng_walk = random.Random(3301)
    tl = Timeline()
    tl.hold(120.0)
    tl.mark("start_up")
    floor_marks = []
    half_flight = STAIR_FLOOR_M / 2.0
    for k in range(1, STAIR_FLOORS + 1):
        for flight in range(2):         # two flights per storey, a landing after each
            tl.linear(tl.h + half_flight, 0.30 * rng_walk.uniform(0.92, 1.08))
            if k == STAIR_FLOORS and flight == 1:
                tl.h = STAIR_FLOORS * STAIR_FLOOR_M
                tl.mark("top")
            tl.hold(1.8 * rng_walk.uniform(0.85, 1.15))
        if k % 3 == 0 and k < STAIR_FLOORS:
            t0 = tl.t
            tl.hold(20.0)
            floor_marks.append(("up", k, t0, tl.t))
    tl.mark("top_left")
    for k in range(STAIR_FLOORS - 1, -1, -1):
        for flight in range(2):
            tl.linear(tl.h - half_flight, 0.42 * rng_walk.uniform(0.92, 1.08))
            if k == 0 and flight == 1:
                tl.h = 0.0
                tl.mark("back_down")
            tl.hold(1.8 * rng_walk.uniform(0.85, 1.15))
        if k % 3 == 0 and k > 0:
            t0 = tl.t
            tl.hold(20.0)
            floor_marks.append(("down", k, t0, tl.t))
    tl.hold(60.0)
    total = tl.t
    n = int(math.floor(total)) + 1
    rng_j = random.Random(3302)
    rng_p = random.Random(3303)
    out = io.StringIO(newline="")
    truth = io.StringIO(newline="")
    out.write("\ufeffTime (s);Pressure (hPa)\r\n")
    truth.write("time_s,true_height_m,true_pressure_pa,true_temperature_c,floor\n")
    for i in range(n):
        t = 0.0 if i == 0 else i + rng_j.uniform(-0.015, 0.015)
        t = round(t, 3)                 # the logged time is the sample time
        h = tl.height(t)
        p = col.pressure(STAIR_Z + h)
        p_log = p / 100.0 + rng_p.gauss(0.0, 0.012)
        out.write(f"{fmt(t, 3)};{fmt(p_log, 4)}\r\n")
        fl = h / STAIR_FLOOR_M
        floor = str(int(round(fl))) if abs(fl - round(fl)) < 1e-9 else ""
        truth.write(f"{fmt(t, 3)},{fmt(h, 3)},{fmt(p, 3)},{fmt(STAIR_T - KELVIN, 3)},{floor}\n")
    w.put("stairwell_walk.csv", out.getvalue().encode("utf-8"), n)
    w.put("truth/stairwell_walk_truth.csv", truth.getvalue().encode("utf-8"), n)

    top = STAIR_Z + STAIR_FLOORS * STAIR_FLOOR_M
    p_top = col.pressure(top)
    # what the two default conversions (no temperature column) would give
    std_top = (geometric_height(isa_h_of_p(p_top)) - geometric_height(isa_h_of_p(STAIR_P)))
    iso288 = RSTAR * T0 / (G0 * M0) * math.log(STAIR_P / p_top)
    return {
        "rows": n, "interval_s": 1.0, "duration_s": round(total, 3),
        "ground_floor_elevation_m": STAIR_Z, "ground_floor_pressure_pa": STAIR_P,
        "temperature_c": 21.0, "floors": STAIR_FLOORS, "floor_height_m": STAIR_FLOOR_M,
        "top_height_m": round(STAIR_FLOORS * STAIR_FLOOR_M, 3),
        "pressure_at_top_pa": round(p_top, 3),
        "walk_start_elapsed_s": tl.marks["start_up"],
        "top_reached_elapsed_s": round(tl.marks["top"], 3),
        "top_left_elapsed_s": round(tl.marks["top_left"], 3),
        "back_down_elapsed_s": round(tl.marks["back_down"], 3),
        "pauses": [{"direction": d, "floor": k, "start_elapsed_s": round(a, 3),
                    "end_elapsed_s": round(b, 3)} for (d, k, a, b) in floor_marks],
        "standard_model_top_height_m": round(std_top, 3),
        "isothermal_288k_top_height_m": round(iso288, 3),
    }


def isa_h_of_p(p: float) -> float:
    """Troposphere inverse of USSA76 eq. 33a (geopotential m'); used only to
    predict what a standard-model run of the stairwell walk reports."""
    return T0 / 0.0065 * (1.0 - (p / P0) ** (RSTAR * 0.0065 / (G0 * M0)))


# ---------------------------------------------------------------------------
# Scenario 4: damaged kite-sensor log
# ---------------------------------------------------------------------------
DAMAGED_Z = 95.0
DAMAGED_P = 100320.0
DAMAGED_T = 18.0 + KELVIN


def make_damaged(w: Writer) -> dict:
    col = HydrostaticColumn(lambda z: DAMAGED_T - 0.0065 * (z - DAMAGED_Z),
                            DAMAGED_Z, DAMAGED_P, DAMAGED_Z + 40.0, 0.1)
    rng = random.Random(4401)

    def good(t: float) -> tuple[str, str]:
        h = 0.0 if t < 12.0 else 0.4 * (t - 12.0)           # rising slowly, 0.4 m/s
        p = col.pressure(DAMAGED_Z + h) / 100.0 + rng.gauss(0.0, 0.015)
        temp = DAMAGED_T - 0.0065 * h - KELVIN + rng.gauss(0.0, 0.08)
        return fmt(p, 2), fmt(temp, 1)

    def tstr(t: float) -> str:
        return str(int(t)) if t == int(t) else fmt(t, 1)

    lines = []                       # (raw line, handling, problem) ; handling '' = good

    def add(raw: str, handling: str = "", problem: str = ""):
        lines.append((raw, handling, problem))

    for ts in range(0, 40):
        t = float(ts)
        p, temp = good(t)
        if ts == 5:
            add(f"{ts},{p},", "flag", "empty temperature field: missing optional value, "
                "row kept and flagged")
        elif ts == 8:
            add(f"{ts},{p[:2]}O{p[3:]},{temp}", "reject",
                f"letter O instead of zero in pressure \"{p[:2]}O{p[3:]}\": not a number")
        elif ts == 14:
            add(f"{ts},,{temp}", "reject", "empty pressure field: required value missing")
        elif ts == 17:
            add(f"{ts},0.00,{temp}", "reject", "pressure 0: pressure <= 0 is outside the accepted range")
        elif ts == 20:
            add(f"{ts},{p},{temp}")
            p2, temp2 = good(t)
            add(f"{ts},{p2},{temp2}", "flag", "duplicate time (same as the previous row): flagged, kept")
        elif ts == 23:
            add(f"{ts},-{p},{temp}", "reject", "negative pressure: pressure <= 0")
        elif ts == 26:
            add(f"{ts},nan,{temp}", "reject", "pressure \"nan\": non-finite value")
        elif ts == 29:
            add(f"{ts},{p}", "reject", "only two fields: missing field (temperature column absent)")
        elif ts == 32:
            bad = p[:-1] + '"' + p[-1:]
            add(f"{ts},{bad},{temp}", "reject",
                "stray double quote inside an unquoted field (not RFC 4180): pressure not a number")
        elif ts == 35:
            add(f"{ts},{p},{temp}")
            pb, tb = good(34.5)
            add(f"{tstr(33.5)},{pb},{tb}", "flag",
                "time going backwards (33.5 after 35): flagged, kept")
        else:
            add(f"{ts},{p},{temp}")
    text = "time_s,pressure_hpa,temperature_c\n" + "".join(raw + "\n" for raw, _, _ in lines)
    w.put("damaged_logger.csv", text.encode("utf-8"), len(lines))

    exp = io.StringIO(newline="")
    cw = csv.writer(exp, lineterminator="\n")
    cw.writerow(["line", "handling", "problem", "raw"])
    bad = []
    for idx, (raw, handling, problem) in enumerate(lines):
        if handling:
            line_no = idx + 2                 # physical line, header is line 1
            cw.writerow([line_no, handling, problem, raw])
            bad.append({"line": line_no, "handling": handling, "problem": problem, "raw": raw})
    w.put("truth/damaged_logger_expected.csv", exp.getvalue().encode("utf-8"), len(bad))
    n_rej = sum(1 for b in bad if b["handling"] == "reject")
    w.doc_comment = damaged_doc_comment(bad)
    return {"rows_read": len(lines), "rows_rejected": n_rej,
            "rows_written": len(lines) - n_rej,
            "rows_flagged_kept": sum(1 for b in bad if b["handling"] == "flag"),
            "stderr_line": f"baroz: {len(lines)} rows read, {len(lines) - n_rej} written, {n_rej} rejected",
            "bad_rows": bad}


def damaged_doc_comment(bad: list[dict]) -> str:
    """The one-line comment that opens docs/demo-data.md (checked by --check)."""
    parts = []
    for b in bad:
        short = b["problem"].split(":")[0]
        verdict = "rejected" if b["handling"] == "reject" else "kept, flagged"
        parts.append(f"line {b['line']}: {short} -> {verdict}")
    return ("<!-- demo_data/damaged_logger.csv bad rows (physical line numbers, header = line 1; "
            "handling per product.md 'Bad input' and 'Pinned details'): "
            + "; ".join(parts) + " -->")


# ---------------------------------------------------------------------------
# Scenario 5: Harrow Rise quarry-face survey (drifting ground pressure, base
# station with an offset clock)
# ---------------------------------------------------------------------------
HARROW_START = epoch(2026, 10, 14, 9, 12, 0)
HARROW_Z = 187.0                  # m MSL, the take-off and landing pad
HARROW_LAT = 53.3                 # deg N: the truth uses WGS 84 normal gravity here
HARROW_LAPSE = 0.0065             # K per geometric metre
HARROW_T_PAD_MID = 11.5 + KELVIN  # K, air temperature at the pad at mid-flight
HARROW_WARMING = 0.4 / 3600.0     # K/s, slow warming of the whole column
HARROW_P_LAUNCH = 100340.0        # Pa, synoptic ground pressure at launch
HARROW_FALL = 150.0               # Pa, synoptic fall from launch to landing
HARROW_FALL_CURVATURE = 0.4       # shape of the fall: s(x) = (1 - c) x + c x^2
# Micro-barometric waves, common to the pad, the drone and the base station:
# (period s, amplitude Pa, phase rad at the flight log's first row).
HARROW_MICROBAROM = ((95.0, 3.0, 0.7), (170.0, 4.0, 2.1), (310.0, 5.0, 4.4))
HARROW_LANES = (20.0, 35.0, 50.0, 65.0, 80.0, 95.0)  # m above the pad
HARROW_SENSOR_OFFSET = 35.0       # Pa, the flight barometer reads high
HARROW_SENSOR_SIGMA = 2.0         # Pa
HARROW_BASE_HEIGHT = 4.0          # m, the base sensor above the pad
HARROW_BASE_SIGMA = 1.5           # Pa
HARROW_BASE_CLOCK_OFFSET = 47.6   # s: base unix_time + 47.6 s = the flight log's clock
HARROW_BASE_INTERVAL = 2.0        # s, on the base logger's clock
HARROW_BASE_FIRST = -527.7        # s, first base tick (base clock) after HARROW_START
HARROW_BASE_MARGIN = 480.0        # s, base coverage before and after the flight log
HARROW_GNSS_TAU = 60.0            # s, Gauss-Markov correlation time of the GNSS error
HARROW_GNSS_SIGMA = 2.5           # m, its standard deviation
HARROW_GNSS_WHITE = 0.5           # m, white GNSS noise
HARROW_TABLE_T = (11.1 + KELVIN, 11.9 + KELVIN)   # pad temperatures of the two tables
HARROW_TABLE_P = 100000.0         # Pa, nominal pad pressure of the ratio tables


def harrow_gravity(z: float) -> float:
    return wgs84_gravity(HARROW_LAT, z)


def harrow_column(t_pad: float, dz: float) -> HydrostaticColumn:
    """Column of the survey day for pad temperature t_pad (K): T(z) = t_pad -
    0.0065 K/m (z - 187 m), WGS 84 normal gravity at 53.3 N, from the nominal
    pad pressure, 137 ... 337 m MSL."""
    return HydrostaticColumn(lambda z: t_pad - HARROW_LAPSE * (z - HARROW_Z), HARROW_Z,
                             HARROW_TABLE_P, HARROW_Z + 150.0, dz, z_bottom=HARROW_Z - 50.0,
                             gravity_of=harrow_gravity)


class HarrowAtmosphere:
    """ln(p(h) / p_pad) of the survey day at height h (m above the pad) for a
    pad temperature T_pad that warms slowly with time. The hydrostatic
    equation is linear in p, so the ratio does not depend on p_pad; two RK4
    tables at pad temperatures bracketing the day are interpolated linearly in
    1/T_pad (the error of that is measured against direct tables in --report)."""

    def __init__(self, dz: float):
        self.cols = [harrow_column(tg, dz) for tg in HARROW_TABLE_T]
        self.u = [1.0 / tg for tg in HARROW_TABLE_T]
        self.ln_p0 = math.log(HARROW_TABLE_P)
        self.gm_r = harrow_gravity(HARROW_Z) * M0 / RSTAR

    def ln_ratio(self, h: float, t_pad: float) -> float:
        if not HARROW_TABLE_T[0] <= t_pad <= HARROW_TABLE_T[1]:
            raise ValueError(f"pad temperature {t_pad} K outside the tables")
        w = (1.0 / t_pad - self.u[0]) / (self.u[1] - self.u[0])
        a = math.log(self.cols[0].pressure(HARROW_Z + h)) - self.ln_p0
        b = math.log(self.cols[1].pressure(HARROW_Z + h)) - self.ln_p0
        return a + w * (b - a)

    def height(self, ln_ratio: float, t_pad: float) -> float:
        """Inverse of ln_ratio (Newton; d ln p/dh = -g M0 / (R* T))."""
        h = -ln_ratio * t_pad / self.gm_r
        for _ in range(50):
            dh = (self.ln_ratio(h, t_pad) - ln_ratio) * (t_pad - HARROW_LAPSE * h) / self.gm_r
            h += dh
            if abs(dh) < 1e-10:
                return h
        raise AssertionError("harrow height inversion did not converge")


def harrow_timeline() -> tuple[Timeline, list[tuple[float, float, float]]]:
    """Height above the pad: 3 min on the pad, climb at 2 m/s to 25 m, six
    lanes along the face 20 ... 95 m (15 m apart, a hover at each end), descent
    and landing on the pad, 3 min on the pad."""
    rng = random.Random(5501)
    tl = Timeline()
    tl.hold(180.0)
    tl.mark("launch")
    tl.move(25.0, 2.0, 0.8)
    tl.mark("climb_done")
    tl.hold(20.0)                              # link and camera checks at 25 m
    tl.move(HARROW_LANES[0], 1.0, 0.5)
    lanes = []
    for k, level in enumerate(HARROW_LANES):
        if k:
            tl.move(level, 1.5, 0.5)           # up to the next bench
        tl.hold(12.0 * rng.uniform(0.8, 1.2))  # hover: camera pitch, lane start
        t0 = tl.t
        tl.hold(rng.uniform(355.0, 385.0))     # the lane along the face, height held
        lanes.append((level, t0, tl.t))
        tl.hold(10.0 * rng.uniform(0.8, 1.2))  # hover at the lane's end
    tl.mark("survey_done")
    tl.move(5.0, 2.5, 0.8)
    tl.hold(6.0)
    tl.move(0.0, 0.6, 0.3)
    tl.mark("landing")
    tl.hold(180.0)
    return tl, lanes


def make_harrow(w: Writer, report: dict) -> dict:
    atm = HarrowAtmosphere(0.1)
    study = numerical_study(atm.cols[0], harrow_column(HARROW_TABLE_T[0], 0.05))
    # interpolation in 1/T_pad against direct tables
    worst = 0.0
    for t_c in (11.3, 11.5, 11.7):
        direct = harrow_column(t_c + KELVIN, 0.1)
        for j in range(0, 541):
            h = -50.0 + 0.37 * j
            exact = math.log(direct.pressure(HARROW_Z + h)) - atm.ln_p0
            worst = max(worst, abs(atm.ln_ratio(h, t_c + KELVIN) - exact))
    study["t_interp_max_rel_p"] = worst
    study["t_interp_max_abs_z_m"] = worst * HARROW_T_PAD_MID / atm.gm_r
    if study["halving_max_rel_p"] > 1e-10 or study["t_interp_max_rel_p"] > 1e-9:
        raise AssertionError(f"harrow numerical study out of bounds: {study}")
    report["harrow_rise_column"] = study

    tl, lanes = harrow_timeline()
    t_l, t_d = tl.marks["launch"], tl.marks["landing"]
    if t_d - t_l < 2400.0:
        raise AssertionError("harrow flight shorter than 40 min")
    t_mid = 0.5 * (t_l + t_d)
    n = int(math.floor(tl.t + 1e-9)) + 1
    t_last = float(n - 1)

    def t_pad(t: float) -> float:
        """Air temperature (K) at the pad at flight-clock time t (s after the log start)."""
        return HARROW_T_PAD_MID + HARROW_WARMING * (t - t_mid)

    def p_synoptic(t: float) -> float:
        x = (t - t_l) / (t_d - t_l)
        c = HARROW_FALL_CURVATURE
        return HARROW_P_LAUNCH - HARROW_FALL * ((1.0 - c) * x + c * x * x)

    def p_micro(t: float) -> float:
        return sum(a * math.sin(2.0 * math.pi * t / per + ph) for per, a, ph in HARROW_MICROBAROM)

    def p_ground(t: float) -> float:
        """True pressure (Pa) at the pad at flight-clock time t."""
        return p_synoptic(t) + p_micro(t)

    # --- flight log (1 Hz) and its truth
    rng_p = random.Random(5502)
    rng_t = random.Random(5503)
    rng_gm = random.Random(5504)
    rng_gw = random.Random(5505)
    phi = math.exp(-1.0 / HARROW_GNSS_TAU)
    gm_step = HARROW_GNSS_SIGMA * math.sqrt(1.0 - phi * phi)
    gm = rng_gm.gauss(0.0, HARROW_GNSS_SIGMA)   # stationary start
    log = io.StringIO(newline="")
    truth = io.StringIO(newline="")
    log.write("time,pressure_hpa,temp_c,gnss_alt_m\n")
    truth.write("time,true_height_m,ground_pressure_hpa,true_pressure_hpa,true_temperature_c\n")
    rows = []                                   # (t, h, p_drone)
    for i in range(n):
        t = float(i)
        if i:
            gm = phi * gm + gm_step * rng_gm.gauss(0.0, 1.0)
        h = tl.height(t)
        tp = t_pad(t)
        pg = p_ground(t)
        p = pg * math.exp(atm.ln_ratio(h, tp))
        ta = tp - HARROW_LAPSE * h
        stamp = utc_string(HARROW_START + t, 3)
        p_log = p + HARROW_SENSOR_OFFSET + rng_p.gauss(0.0, HARROW_SENSOR_SIGMA)
        temp = ta - KELVIN + rng_t.gauss(0.0, 0.1)
        gnss = HARROW_Z + h + gm + rng_gw.gauss(0.0, HARROW_GNSS_WHITE)
        log.write(f"{stamp},{fmt(p_log / 100.0, 2)},{fmt(temp, 1)},{fmt(gnss, 1)}\n")
        truth.write(f"{stamp},{fmt(h, 3)},{fmt(pg / 100.0, 4)},{fmt(p / 100.0, 4)},"
                    f"{fmt(ta - KELVIN, 3)}\n")
        rows.append((t, h, p))
    w.put("harrow_rise_survey.csv", log.getvalue().encode("utf-8"), n)
    w.put("truth/harrow_rise_truth.csv", truth.getvalue().encode("utf-8"), n)

    # --- base station (every 2 s on its own clock, 47.6 s behind the flight log)
    rng_bp = random.Random(5506)
    rng_bt = random.Random(5507)
    n_base = int(math.floor((t_last + HARROW_BASE_MARGIN - HARROW_BASE_CLOCK_OFFSET
                             - HARROW_BASE_FIRST) / HARROW_BASE_INTERVAL + 1e-9)) + 1
    base = io.StringIO(newline="")
    base.write("unix_time,baro_pa,air_temp_k\n")
    base_true = []                              # (flight-clock t, true pad pressure)
    for k in range(n_base):
        u = HARROW_BASE_FIRST + HARROW_BASE_INTERVAL * k     # base clock, s after HARROW_START
        t = u + HARROW_BASE_CLOCK_OFFSET                     # the same instant on the flight clock
        tp = t_pad(t)
        pb = p_ground(t) * math.exp(atm.ln_ratio(HARROW_BASE_HEIGHT, tp))
        p_log = int(round(pb + rng_bp.gauss(0.0, HARROW_BASE_SIGMA)))
        tb = tp - HARROW_LAPSE * HARROW_BASE_HEIGHT + rng_bt.gauss(0.0, 0.05)
        base.write(f"{fmt(HARROW_START + u, 1)},{p_log},{fmt(tb, 1)}\n")
        base_true.append((t, p_ground(t)))
    w.put("harrow_rise_base.csv", base.getvalue().encode("utf-8"), n_base)

    # --- what the references would give, from the truth (noise-free)
    pre = [r for r in rows if r[0] < t_l]
    post = [r for r in rows if r[0] > t_d]
    p_pre = sum(p_ground(r[0]) for r in pre) / len(pre)
    t_pre = sum(r[0] for r in pre) / len(pre)
    p_post = sum(p_ground(r[0]) for r in post) / len(post)
    t_post = sum(r[0] for r in post) / len(post)
    flight = [r for r in rows if t_l <= r[0] <= t_d]
    bt = [b[0] for b in base_true]

    def base_at(t: float) -> float:
        i = bisect.bisect_right(bt, t) - 1
        (t0, p0), (t1, p1) = base_true[i], base_true[i + 1]
        return p0 + (p1 - p0) * (t - t0) / (t1 - t0)

    def worst_error(ref_of) -> dict:
        worst_e, worst_t = 0.0, 0.0
        for (t, h, p) in flight:
            e = atm.height(math.log(p / ref_of(t)), t_pad(t)) - h
            if abs(e) > abs(worst_e):
                worst_e, worst_t = e, t
        t, h, p = flight[-1]
        e_end = atm.height(math.log(p / ref_of(t)), t_pad(t)) - h
        return {"max_abs_error_m": round(abs(worst_e), 3),
                "signed_error_at_max_m": round(worst_e, 3),
                "time_of_max": utc_string(HARROW_START + worst_t, 3),
                "elapsed_of_max_s": worst_t, "error_at_last_flight_row_m": round(e_end, 3)}

    def linear_ref(ta: float, pa: float, tb: float, pb: float):
        return lambda t: pa + (pb - pa) * (t - ta) / (tb - ta)

    errors = {
        "note": "heights from the true (noise-free) drone pressure with the true atmosphere of "
                "the day; only the ground reference differs; rows from launch to landing",
        "constant_pre_launch_mean": worst_error(lambda t: p_pre),
        "linear_drift_pre_post_means": worst_error(linear_ref(t_pre, p_pre, t_post, p_post)),
        "linear_drift_launch_landing": worst_error(
            linear_ref(t_l, p_ground(t_l), t_d, p_ground(t_d))),
        "base_offset_47_6_s": worst_error(base_at),
        "base_offset_0_s": worst_error(lambda t: base_at(t + HARROW_BASE_CLOCK_OFFSET)),
    }
    tp_l = t_pad(t_l)
    # the flight sensor reads 35 Pa high: referenced to the true pad pressure
    # (a base with no tie) it puts the drone this much too high (negative: low)
    sensor_offset_m = atm.height(math.log((p_ground(t_l) + HARROW_SENSOR_OFFSET) / p_ground(t_l)),
                                 tp_l)
    base_deficit = p_ground(t_l) * (1.0 - math.exp(atm.ln_ratio(HARROW_BASE_HEIGHT, tp_l)))
    errors["sensor_offset_as_height_m"] = round(sensor_offset_m, 3)
    errors["base_height_ignored_error_m"] = -HARROW_BASE_HEIGHT
    report["harrow_rise"] = errors

    def at(t: float) -> dict:
        return {"time": utc_string(HARROW_START + t, 3), "elapsed_s": round(t, 3)}

    base_u0 = HARROW_START + HARROW_BASE_FIRST
    base_u1 = base_u0 + HARROW_BASE_INTERVAL * (n_base - 1)
    info = {
        "generator": "tools/make_demo_data.py",
        "scenario": "Harrow Rise quarry-face survey, multirotor Tern-4 (invented)",
        "flight_log": "demo_data/harrow_rise_survey.csv",
        "base_log": "demo_data/harrow_rise_base.csv",
        "log_start_time": utc_string(HARROW_START, 3),
        "log_end_time": utc_string(HARROW_START + t_last, 3),
        "rows": n, "interval_s": 1.0, "duration_s": t_last,
        "pad_elevation_m": HARROW_Z, "latitude_deg": HARROW_LAT,
        "gravity": "WGS 84 normal gravity at 53.3 N, TR8350.2 eqs. 4-1 and 4-3",
        "launch_time": utc_string(HARROW_START + t_l, 3), "launch_elapsed_s": t_l,
        "landing_time": utc_string(HARROW_START + t_d, 3), "landing_elapsed_s": round(t_d, 3),
        "flight_duration_s": round(t_d - t_l, 3),
        "climb_to_25m_done_elapsed_s": round(tl.marks["climb_done"], 3),
        "survey_done_elapsed_s": round(tl.marks["survey_done"], 3),
        "max_height_m": max(HARROW_LANES),
        "lanes": [{"height_m": lv, "start": at(a), "end": at(b)} for (lv, a, b) in lanes],
        "base_clock_offset_s": HARROW_BASE_CLOCK_OFFSET,
        "base_clock_offset_meaning": "base unix_time + 47.6 s = flight-log clock "
                                     "(baroz --base-offset +47.6)",
        "flight_sensor_offset_hpa": HARROW_SENSOR_OFFSET / 100.0,
        "flight_sensor_noise_pa": HARROW_SENSOR_SIGMA,
        "base_height_above_pad_m": HARROW_BASE_HEIGHT,
        "base_sensor_offset_hpa": 0.0,
        "base_noise_pa": HARROW_BASE_SIGMA,
        "base_rows": n_base, "base_interval_s": HARROW_BASE_INTERVAL,
        "base_first_unix_time": round(base_u0, 1), "base_last_unix_time": round(base_u1, 1),
        "base_first_time_flight_clock": utc_string(base_u0 + HARROW_BASE_CLOCK_OFFSET, 1),
        "base_last_time_flight_clock": utc_string(base_u1 + HARROW_BASE_CLOCK_OFFSET, 1),
        "base_minus_pad_pressure_at_launch_pa": round(-base_deficit, 3),
        "pre_launch_flight_minus_base_pa": round(HARROW_SENSOR_OFFSET + sum(
            p_ground(r[0]) * (1.0 - math.exp(atm.ln_ratio(HARROW_BASE_HEIGHT, t_pad(r[0]))))
            for r in pre) / len(pre), 3),
        "ground_pressure_at_launch_hpa": round(p_ground(t_l) / 100.0, 4),
        "ground_pressure_at_landing_hpa": round(p_ground(t_d) / 100.0, 4),
        "ground_drift_hpa": round((p_synoptic(t_d) - p_synoptic(t_l)) / 100.0, 4),
        "ground_drift_with_microbarom_hpa": round((p_ground(t_d) - p_ground(t_l)) / 100.0, 4),
        "pre_launch_mean_ground_pressure_hpa": round(p_pre / 100.0, 4),
        "pre_launch_rows_elapsed_s": [pre[0][0], pre[-1][0]],
        "post_landing_mean_ground_pressure_hpa": round(p_post / 100.0, 4),
        "post_landing_rows_elapsed_s": [post[0][0], post[-1][0]],
        "pre_to_post_mean_drift_hpa": round((p_post - p_pre) / 100.0, 4),
        "ground_pressure_model": {
            "synoptic": f"p = {fmt(HARROW_P_LAUNCH / 100.0, 2)} hPa - "
                        f"{fmt(HARROW_FALL / 100.0, 2)} hPa ((1 - c) x + c x^2), "
                        f"x = (t - launch) / (landing - launch), c = {HARROW_FALL_CURVATURE}: "
                        "a fall that speeds up",
            "synoptic_launch_hpa": HARROW_P_LAUNCH / 100.0,
            "synoptic_fall_hpa": HARROW_FALL / 100.0,
            "curvature": HARROW_FALL_CURVATURE,
            "microbarom": [{"period_s": per, "amplitude_pa": a, "phase_rad": ph}
                           for per, a, ph in HARROW_MICROBAROM],
            "microbarom_phase_origin": utc_string(HARROW_START, 3),
        },
        "temperature": {
            "pad_c_at_mid_flight": round(HARROW_T_PAD_MID - KELVIN, 3),
            "warming_k_per_h": round(HARROW_WARMING * 3600.0, 3),
            "mid_flight_elapsed_s": round(t_mid, 3),
            "lapse_rate_k_per_m": HARROW_LAPSE,
        },
        "gnss_error": {"gauss_markov_tau_s": HARROW_GNSS_TAU,
                       "gauss_markov_sigma_m": HARROW_GNSS_SIGMA,
                       "white_sigma_m": HARROW_GNSS_WHITE},
        "reference_errors": errors,
    }
    w.put("truth/harrow_rise_truth.json", (json.dumps(info, indent=2) + "\n").encode("utf-8"))
    return info


# ---------------------------------------------------------------------------
# Driver
# ---------------------------------------------------------------------------
def generate(report: dict) -> Writer:
    std = standard_column(1.0)
    report["table_i"] = check_table_i(std)
    std_half = standard_column(0.5)
    check_table_i(std_half)
    report["standard"] = numerical_study(std, std_half, closed_form=ussa76_closed_form_pressure)
    s = report["standard"]
    # the integrator must agree with the closed form far below the data's needs
    if s["closed_form_max_rel_p"] > 1e-8 or s["halving_max_rel_p"] > 1e-8 \
            or s["interp_max_abs_z_m"] > 1e-3:
        raise AssertionError(f"numerical study out of bounds: {s}")

    kestrel = kestrel_column(1.0)
    report["kestrel"] = numerical_study(kestrel, kestrel_column(0.5))
    k = report["kestrel"]
    if k["halving_max_rel_p"] > 1e-8 or k["interp_max_abs_z_m"] > 1e-3:
        raise AssertionError(f"numerical study out of bounds: {k}")

    w = Writer()
    kestrel_events = make_kestrel(std, kestrel, w)
    kestrel_events["truth_step_halving_max_rel_p"] = float(f"{k['halving_max_rel_p']:.2e}")
    events = {
        "generator": "tools/make_demo_data.py",
        "note": "true events of the demo scenarios; times of flight events are exact "
                "(0.1 s simulation step), not rounded to the log interval",
        "kestrel2_balloon": kestrel_events,
        "hollin_drone_hop": make_hollin(w, report),
        "stairwell_walk": make_stairwell(w, report),
        "damaged_logger": make_damaged(w),
    }
    w.put("truth/events.json", (json.dumps(events, indent=2) + "\n").encode("utf-8"))
    make_harrow(w, report)      # own truth JSON: events.json is left as it was
    return w


def write_all(w: Writer, out_dir: str):
    for rel, data in w.files.items():
        path = os.path.join(out_dir, rel)
        os.makedirs(os.path.dirname(path), exist_ok=True)
        tmp = path + ".tmp"
        with open(tmp, "wb") as f:
            f.write(data)
        os.replace(tmp, path)


def main(argv: list[str]) -> int:
    repo = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
    ap = argparse.ArgumentParser(description="generate the baroz demo data")
    ap.add_argument("--out", default=os.path.join(repo, "demo_data"),
                    help="output directory (default: demo_data/ of the repository)")
    ap.add_argument("--check", action="store_true",
                    help="regenerate into a temporary directory and compare byte for byte "
                         "with the files in --out; exit 1 if different")
    ap.add_argument("--report", action="store_true",
                    help="print the numerical error study and the Harrow Rise reference errors")
    ap.add_argument("--doc-comment", action="store_true",
                    help="print the first line that docs/demo-data.md must have")
    args = ap.parse_args(argv)

    report: dict = {}
    w = generate(report)
    if args.report:
        print(json.dumps(report, indent=2, default=str))
    if args.doc_comment:
        print(w.doc_comment)
        return 0
    if args.check:
        tmp = tempfile.mkdtemp(prefix="baroz_demo_")
        try:
            write_all(w, tmp)
            bad = []
            for rel in sorted(w.files):
                a = os.path.join(tmp, rel)
                b = os.path.join(args.out, rel)
                if not os.path.exists(b):
                    bad.append(f"{rel}: missing in {args.out}")
                    continue
                with open(a, "rb") as fa, open(b, "rb") as fb:
                    if fa.read() != fb.read():
                        bad.append(f"{rel}: differs")
            doc = os.path.join(repo, "docs", "demo-data.md")
            if os.path.exists(doc):
                with open(doc, encoding="utf-8") as f:
                    if f.readline().rstrip("\n") != w.doc_comment:
                        bad.append("docs/demo-data.md: first line does not match "
                                   "(see --doc-comment)")
            if bad:
                for line in bad:
                    print(f"make_demo_data: {line}", file=sys.stderr)
                return 1
            print(f"make_demo_data: {len(w.files)} files identical")
            return 0
        finally:
            shutil.rmtree(tmp)
    write_all(w, args.out)
    for rel in sorted(w.files):
        rows = w.rows.get(rel)
        size = len(w.files[rel])
        print(f"{rel}: {size} bytes" + (f", {rows} rows" if rows is not None else ""))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
