"""Closed-form laminar flow rates of tubes and slits: optional fast paths of the flow engine.

Each function gives Q [m^3/s] from the wall shear stress tau_w [Pa] and the
model's parameters (SI); a declaration names them in its ``extras`` as
"tube_flow_rate"(tau_w, radius, **params) and "slit_flow_rate"(tau_w,
half_gap, width, **params).  :mod:`rheofit.flow` checks them against its
generic (Rabinowitsch-Mooney) path; they return 0 at or below a yield stress.
"rectangle_flow_rate"(G, half_depth, half_width, **params) gives Q from the
pressure gradient G = dP/L of a rectangular duct (the 2-D solver's fast path).
"""

from __future__ import annotations

import numpy as np


def _yield_ratio(tau_w, tau_y):
    """(phi, 1 - phi) with phi = tau_y / tau_w capped at 1 (no flow) [-].

    1 - phi is formed as (tau_w - tau_y) / tau_w, exact near the yield stress.
    """
    tau_w = np.asarray(tau_w, dtype=float)
    return np.minimum(tau_y / tau_w, 1.0), np.maximum(tau_w - tau_y, 0.0) / tau_w


def newtonian_tube_flow_rate(tau_w, radius, mu):
    """Q = pi R^3 tau_w / (4 mu): Hagen (1839), Poiseuille (1840)."""
    return np.pi * radius**3 * np.asarray(tau_w, dtype=float) / (4.0 * mu)


def newtonian_slit_flow_rate(tau_w, half_gap, width, mu):
    """Q = 2 W h^2 tau_w / (3 mu): plane Poiseuille flow (Bird, Stewart & Lightfoot 2002, ch. 2)."""
    return 2.0 * width * half_gap**2 * np.asarray(tau_w, dtype=float) / (3.0 * mu)


def power_law_tube_flow_rate(tau_w, radius, K, n):
    """Q = pi n R^3 / (3n + 1) * (tau_w / K)^(1/n): Skelland (1967); Chhabra & Richardson (2008), ch. 3."""
    return np.pi * n * radius**3 / (3.0 * n + 1.0) * (np.asarray(tau_w, dtype=float) / K) ** (1.0 / n)


def power_law_slit_flow_rate(tau_w, half_gap, width, K, n):
    """Q = 2 n W h^2 / (2n + 1) * (tau_w / K)^(1/n): Skelland (1967); Chhabra & Richardson (2008)."""
    return 2.0 * n * width * half_gap**2 / (2.0 * n + 1.0) * (np.asarray(tau_w, dtype=float) / K) ** (1.0 / n)


def bingham_tube_flow_rate(tau_w, radius, tau_y, mu_p):
    """Q = pi R^3 tau_w / (4 mu_p) * (1 - 4/3 phi + 1/3 phi^4): Buckingham (1921); Reiner (1926).

    Evaluated as (1 - phi)^2 (3 + 2 phi + phi^2) / 3, free of cancellation near phi = 1.
    """
    phi, rest = _yield_ratio(tau_w, tau_y)
    return np.pi * radius**3 * np.asarray(tau_w, dtype=float) / (4.0 * mu_p) * (
        rest**2 * (3.0 + 2.0 * phi + phi**2) / 3.0)


def bingham_slit_flow_rate(tau_w, half_gap, width, tau_y, mu_p):
    """Q = 2 W h^2 tau_w / (3 mu_p) * (1 - 3/2 phi + 1/2 phi^3): Buckingham (1921), slit form.

    Evaluated as (1 - phi)^2 (2 + phi) / 2.
    """
    phi, rest = _yield_ratio(tau_w, tau_y)
    return 2.0 * width * half_gap**2 * np.asarray(tau_w, dtype=float) / (3.0 * mu_p) * (
        rest**2 * (2.0 + phi) / 2.0)


def herschel_bulkley_tube_flow_rate(tau_w, radius, tau_y, K, n):
    """Q = pi R^3 (tau_w/K)^(1/n) (1-phi)^(1+1/n) [(1-phi)^2/(3+1/n) + 2 phi (1-phi)/(2+1/n) + phi^2/(1+1/n)].

    Chhabra & Richardson (2008), ch. 3 (Herschel-Bulkley fluid in a pipe).
    """
    phi, rest = _yield_ratio(tau_w, tau_y)
    m = 1.0 / n
    bracket = rest**2 / (3 + m) + 2 * phi * rest / (2 + m) + phi**2 / (1 + m)
    # (tau_w/K)^(1/n) (1-phi)^(1/n) = ((tau_w - tau_y)/K)^(1/n), the wall shear rate: no overflow
    rate = (np.maximum(np.asarray(tau_w, dtype=float) - tau_y, 0.0) / K) ** m
    return np.pi * radius**3 * rate * rest * bracket


def herschel_bulkley_slit_flow_rate(tau_w, half_gap, width, tau_y, K, n):
    """Q = 2 W h^2 (tau_w/K)^(1/n) (1-phi)^(1+1/n) [(1-phi)/(2+1/n) + phi/(1+1/n)] (slit form)."""
    phi, rest = _yield_ratio(tau_w, tau_y)
    m = 1.0 / n
    bracket = rest / (2 + m) + phi / (1 + m)
    rate = (np.maximum(np.asarray(tau_w, dtype=float) - tau_y, 0.0) / K) ** m
    return 2.0 * width * half_gap**2 * rate * rest * bracket


def casson_tube_flow_rate(tau_w, radius, tau_y, mu_c):
    """Q = pi R^3 tau_w / (4 mu_c) * (1 - 16/7 sqrt(phi) + 4/3 phi - 1/21 phi^4): Casson (1959).

    Evaluated with t = sqrt(phi) as (1-t)^2 (21 - 6t - 5t^2 - 4t^3 - 3t^4 - 2t^5 - t^6) / 21.
    """
    phi, rest = _yield_ratio(tau_w, tau_y)
    t = np.sqrt(phi)
    gap = rest / (1.0 + t)  # 1 - sqrt(phi)
    poly = 21.0 - t * (6.0 + t * (5.0 + t * (4.0 + t * (3.0 + t * (2.0 + t)))))
    return np.pi * radius**3 * np.asarray(tau_w, dtype=float) / (4.0 * mu_c) * gap**2 * poly / 21.0


def casson_slit_flow_rate(tau_w, half_gap, width, tau_y, mu_c):
    """Q = 2 W h^2 tau_w / (3 mu_c) * (1 - 12/5 sqrt(phi) + 3/2 phi - 1/10 phi^3) (slit form of Casson 1959).

    Evaluated with t = sqrt(phi) as (1-t)^2 (10 - 4t - 3t^2 - 2t^3 - t^4) / 10.
    """
    phi, rest = _yield_ratio(tau_w, tau_y)
    t = np.sqrt(phi)
    gap = rest / (1.0 + t)
    poly = 10.0 - t * (4.0 + t * (3.0 + t * (2.0 + t)))
    return 2.0 * width * half_gap**2 * np.asarray(tau_w, dtype=float) / (3.0 * mu_c) * gap**2 * poly / 10.0


def ellis_tube_flow_rate(tau_w, radius, eta0, tau_half, alpha):
    """Q = pi R^3 tau_w / (4 eta0) * [1 + 4/(alpha+3) * (tau_w/tau_half)^(alpha-1)].

    Bird, Stewart & Lightfoot (2002), ch. 8 (from memory).  Derived here as
    well from the Rabinowitsch-Mooney integral Q = pi R^3/tau_w^3 int_0^tau_w
    tau^2 gd(tau) dtau with gd = tau/eta0 + tau^alpha / (eta0 tau_half^(alpha-1)):
    the two terms give tau_w^4/(4 eta0) and tau_w^(alpha+3)/((alpha+3) eta0
    tau_half^(alpha-1)), which is the form above.
    """
    tau_w = np.asarray(tau_w, dtype=float)
    return np.pi * radius**3 * tau_w / (4.0 * eta0) * (
        1.0 + 4.0 / (alpha + 3.0) * (tau_w / tau_half) ** (alpha - 1.0))


def ellis_slit_flow_rate(tau_w, half_gap, width, eta0, tau_half, alpha):
    """Q = 2 W h^2 tau_w / (3 eta0) * [1 + 3/(alpha+2) * (tau_w/tau_half)^(alpha-1)].

    Derived here from the slit integral Q = 2 W h^2/tau_w^2 int_0^tau_w tau
    gd(tau) dtau: the terms give tau_w^3/(3 eta0) and tau_w^(alpha+2) /
    ((alpha+2) eta0 tau_half^(alpha-1)).  At alpha = 1 both forms are the
    Newtonian ones with viscosity eta0/2.
    """
    tau_w = np.asarray(tau_w, dtype=float)
    return 2.0 * width * half_gap**2 * tau_w / (3.0 * eta0) * (
        1.0 + 3.0 / (alpha + 2.0) * (tau_w / tau_half) ** (alpha - 1.0))




#: sum over odd i of 1/i^5 = (1 - 2^-5) zeta(5), zeta(5) = 1.0369277551433699 (Abramowitz & Stegun 1964, 23.2.20, table 23.3)
_ODD_INVERSE_FIFTH = (1.0 - 2.0**-5) * 1.0369277551433699


def newtonian_rectangle_flow_rate(pressure_gradient, half_depth, half_width, mu):
    """Q [m^3/s] of a Newtonian fluid in a rectangular duct -a <= y <= a, -b <= z <= b.

    Q = (4 b a^3 G / (3 mu)) [1 - (192 a / (pi^5 b)) sum_{i = 1, 3, 5, ...} tanh(i pi b / 2a) / i^5]
    with a <= b (the section is turned so), G = dP/L [Pa/m]: White, F.M. (1991)
    Viscous Fluid Flow, 2nd ed., McGraw-Hill, eq. 3-48 (Boussinesq 1868).  The
    sum is taken as sum 1/i^5 - sum (1 - tanh(x_i))/i^5, the second part
    falling like exp(-i pi b/a), so the value is exact to rounding.
    """
    a, b = min(half_depth, half_width), max(half_depth, half_width)
    i = np.arange(1.0, 80.0, 2.0)
    x = i * np.pi * b / (2.0 * a)
    correction = np.sum(2.0 / (np.exp(np.minimum(2.0 * x, 700.0)) + 1.0) / i**5)
    bracket = 1.0 - 192.0 * a / (np.pi**5 * b) * (_ODD_INVERSE_FIFTH - correction)
    return 4.0 * b * a**3 * np.asarray(pressure_gradient, dtype=float) / (3.0 * mu) * bracket
