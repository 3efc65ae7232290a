#!/usr/bin/python3
"""Independent reference values for tests/test_functions_test.cpp.

Each published test function is written again here in numpy, from its
published definition, without looking at include/wavestack/check/test_functions.hpp:
  Si(x)              scipy.special.sici (Cephes rational approximations)
  siFront            Kammonen, Kiessling, Plechac, Sandberg & Szepessy (2020),
                     "Adaptive random Fourier features with Metropolis sampling"
  ishigami           Ishigami & Homma (1990), a = 7, b = 0.1
  borehole, otl_circuit, piston, wing_weight
                     as given in Surjanovic & Bingham, Virtual Library of
                     Simulation Experiments (SFU)
  friedman1          Friedman (1991), "Multivariate adaptive regression splines"
  colebrook          Colebrook (1939) equation solved for f by scipy.optimize.brentq
The formulas are written from memory; the C++ header was written from memory
separately, so agreement of the two is the check.

Run with Debian's python (numpy + scipy):
    /usr/bin/python3 tests/reference/test_functions_reference.py
and paste the printed blocks into the test. Each function uses its own seed so
that adding a function does not change the others' points.
"""
import math

import numpy as np
from scipy.optimize import brentq
from scipy.special import sici

POINTS = 20


def si(x):
    return sici(x)[0]


def si_front(x, a):
    return si(x[0] / a) * math.exp(-0.5 * float(np.dot(x, x)))


def ishigami(x):
    return math.sin(x[0]) + 7.0 * math.sin(x[1]) ** 2 + 0.1 * x[2] ** 4 * math.sin(x[0])


def borehole(x):
    rw, r, tu, hu, tl, hl, length, kw = x
    log_ratio = math.log(r / rw)
    return (2.0 * math.pi * tu * (hu - hl)) / (
        log_ratio * (1.0 + 2.0 * length * tu / (log_ratio * rw ** 2 * kw) + tu / tl))


def otl_circuit(x):
    rb1, rb2, rf, rc1, rc2, beta = x
    vb1 = 12.0 * rb2 / (rb1 + rb2)
    bc = beta * (rc2 + 9.0)
    return ((vb1 + 0.74) * bc / (bc + rf) + 11.35 * rf / (bc + rf)
            + 0.74 * rf * bc / ((bc + rf) * rc1))


def piston(x):
    m, s, v0, k, p0, ta, t0 = x
    a = p0 * s + 19.62 * m - k * v0 / s
    v = s / (2.0 * k) * (math.sqrt(a ** 2 + 4.0 * k * p0 * v0 * ta / t0) - a)  # direct form
    return 2.0 * math.pi * math.sqrt(m / (k + s ** 2 * p0 * v0 * ta / (t0 * v ** 2)))


def wing_weight(x):
    sw, wfw, aspect, sweep_deg, q, taper, tc, nz, wdg, wp = x
    c = math.cos(math.radians(sweep_deg))
    return (0.036 * sw ** 0.758 * wfw ** 0.0035 * (aspect / c ** 2) ** 0.6 * q ** 0.006
            * taper ** 0.04 * (100.0 * tc / c) ** -0.3 * (nz * wdg) ** 0.49 + sw * wp)


def friedman1(x):
    return (10.0 * math.sin(math.pi * x[0] * x[1]) + 20.0 * (x[2] - 0.5) ** 2
            + 10.0 * x[3] + 5.0 * x[4])


def colebrook_friction(re, rel_rough):
    # Residual in f itself (not in 1/sqrt f as the C++ solver uses).
    g = lambda f: 1.0 / math.sqrt(f) + 2.0 * math.log10(rel_rough / 3.7 + 2.51 / (re * math.sqrt(f)))
    return brentq(g, 1e-4, 1.0, xtol=1e-300, rtol=4.0 * np.finfo(float).eps, maxiter=500)


def colebrook(x):  # inputs: log10 Re, log10 (eps / D)
    return colebrook_friction(10.0 ** x[0], 10.0 ** x[1])


def fmt(v):
    return "%.17g" % v


def print_cases(name, f, points):
    print(f"// {name}")
    for x in points:
        print("    {{" + ", ".join(fmt(v) for v in x) + "}, " + fmt(f(x)) + "},")
    print()


def uniform(seed, lower, upper):
    rng = np.random.default_rng(seed)
    lower, upper = np.asarray(lower, float), np.asarray(upper, float)
    return lower + (upper - lower) * rng.random((POINTS, lower.size))


def main():
    # (a) Si at 30 log-spaced points, then a few negative and near-threshold ones.
    print("// Si: {x, Si(x)}")
    xs = list(np.geomspace(1e-8, 1e4, 30)) + [-0.7, -3.99, 3.999, 4.0, 4.001, 7.5, 25.0, -150.0]
    for x in xs:
        print("    {" + fmt(x) + ", " + fmt(si(x)) + "},")
    print()

    # A&S Table 5.1 check of the values quoted in the test (10 decimals).
    for x in (0.5, 1.0, 2.0, 5.0, 10.0):
        print(f"// Si({x}) = {si(x):.10f}")
    print()

    # siFront with d = 3, a = 0.05, x ~ N(0, I_3).
    rng = np.random.default_rng(101)
    print_cases("siFront, d = 3, a = 0.05", lambda x: si_front(x, 0.05), rng.standard_normal((POINTS, 3)))

    pi = math.pi
    print_cases("ishigami", ishigami, uniform(102, [-pi] * 3, [pi] * 3))
    print_cases("borehole", borehole,
                uniform(103, [0.05, 100, 63070, 990, 63.1, 700, 1120, 9855],
                        [0.15, 50000, 115600, 1110, 116, 820, 1680, 12045]))
    print_cases("otlCircuit", otl_circuit,
                uniform(104, [50, 25, 0.5, 1.2, 0.25, 50], [150, 70, 3, 2.5, 1.2, 300]))
    print_cases("piston", piston,
                uniform(105, [30, 0.005, 0.002, 1000, 90000, 290, 340],
                        [60, 0.020, 0.010, 5000, 110000, 296, 360]))
    print_cases("wingWeight", wing_weight,
                uniform(106, [150, 220, 6, -10, 16, 0.5, 0.08, 2.5, 1700, 0.025],
                        [200, 300, 10, 10, 45, 1, 0.18, 6, 2500, 0.08]))
    print_cases("friedman1", friedman1, uniform(107, [0.0] * 10, [1.0] * 10))
    print_cases("colebrook (log10 Re, log10 eps/D)", colebrook,
                uniform(108, [math.log10(4000.0), -6.0], [8.0, math.log10(5e-2)]))


if __name__ == "__main__":
    main()
