#!/usr/bin/python3
"""Independent reference values for tests/plane_wall_test.cpp.

Plane wall with convection, exact series solution (Incropera & DeWitt,
Fundamentals of Heat and Mass Transfer, section 5.5):

    theta(x*, Bi, Fo) = sum_n C_n exp(-zeta_n^2 Fo) cos(zeta_n x*)
    C_n = 4 sin(zeta_n) / (2 zeta_n + sin(2 zeta_n)),  zeta_n tan(zeta_n) = Bi

Written independently of examples/plane_wall.hpp: roots by scipy.optimize.brentq
on g(z) = z tan z - Bi inside ((n-1) pi, (n-1) pi + pi/2) (the tangent form, kept
a hair below the pole), a fixed, generous number of terms instead of a tail
bound, and math.fsum for the sum.

Run with Debian's python (numpy + scipy):  /usr/bin/python3 plane_wall_reference.py
and paste the printed rows into the reference table of the test.
"""
import math

from scipy.optimize import brentq

TERMS = 400  # zeta_400 > 1250; exp(-1250^2 * 0.05) underflows: far more than needed


def root(n, biot):
    lower = (n - 1) * math.pi
    upper = lower + 0.5 * math.pi
    g = lambda z: z * math.tan(z) - biot
    # g(lower) = -biot < 0; g -> +inf just below upper: stay a hair inside.
    a = lower + 1e-300 if n == 1 else lower
    b = upper - 1e-13 * upper
    while g(b) < 0.0:  # very large Bi: root even closer to the pole
        b = 0.5 * (b + upper)
    return brentq(g, a, b, xtol=1e-300, rtol=4.0 * 2.220446049250313e-16, maxiter=500)


def theta(x_star, biot, fourier):
    terms = []
    for n in range(1, TERMS + 1):
        z = root(n, biot)
        c = 4.0 * math.sin(z) / (2.0 * z + math.sin(2.0 * z))
        terms.append(c * math.exp(-z * z * fourier) * math.cos(z * x_star))
    return math.fsum(terms)


# Demo box: x* in [0, 1], log10 Bi in [-1, 1.5], Fo in [0.05, 2]; a few rows at
# its corners, at Fo = 0.05 (slowest series), and at Bi = 100 (beyond the box).
CASES = [
    (0.0, 0.1, 0.05),
    (1.0, 0.1, 0.05),
    (0.5, 0.1, 2.0),
    (0.0, 1.0, 0.05),
    (0.3, 1.0, 0.2),
    (1.0, 1.0, 0.5),
    (0.75, 1.0, 2.0),
    (0.0, 10.0, 0.05),
    (0.9, 10.0, 0.05),
    (1.0, 10.0, 0.05),
    (0.5, 10.0, 0.3),
    (1.0, 10.0, 1.0),
    (0.0, 10.0 ** 1.5, 0.05),
    (0.95, 10.0 ** 1.5, 0.05),
    (1.0, 10.0 ** 1.5, 0.05),
    (0.6, 10.0 ** 1.5, 0.25),
    (0.2, 10.0 ** 1.5, 2.0),
    (0.1, 10.0 ** -0.5, 0.7),
    (0.85, 10.0 ** 0.5, 0.12),
    (0.0, 100.0, 0.05),
    (0.98, 100.0, 0.05),
    (0.4, 100.0, 1.5),
]

if __name__ == "__main__":
    print("// x*, Bi, Fo, theta  (tests/reference/plane_wall_reference.py)")
    for x_star, biot, fourier in CASES:
        print("{%r, %r, %r, %.17g}," % (x_star, biot, fourier, theta(x_star, biot, fourier)))
