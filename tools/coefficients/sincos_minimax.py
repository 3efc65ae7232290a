#!/usr/bin/python3
"""Coefficients of include/wavestack/detail/sincos.hpp: minimax polynomials
for sine and cosine on the reduced range, and the split of pi/2 used for
the range reduction. Needs only Debian's python3-mpmath.

Run: /usr/bin/python3 tools/coefficients/sincos_minimax.py
and paste the printed constants into the header.

For r in [-pi/4, pi/4] and t = r^2:
    sin r ~ r + r^3 P(t),    P approximates g(t) = (sin r - r) / r^3
    cos r ~ 1 - t/2 + t^2 Q(t), Q approximates h(t) = (cos r - 1 + t/2) / t^2
P and Q minimise the largest weighted error |w(t) (P(t) - g(t))| on
[0, T] by the Remez exchange algorithm (Remez 1934; e.g. Muller, "Elementary
Functions", ch. 3), with w(t) = t for sine (error relative to sin r ~ r,
since r^3 / r = t) and w(t) = t^2 for cosine (error relative to cos r >=
0.7). T is a hair above (pi/4)^2 so that rounding of the quadrant index
cannot leave r outside the fitted range.

pi/2 is split as C1 + C2 + C3, where C1 and C2 keep only their leading bits
so that q * C1 and q * C2 are exact for every quadrant index |q| < 2^zero_bits
(Cody & Waite 1980): the reduction is then exact up to the rounding of C3,
with or without fused multiply-add.
"""
import mpmath as mp

mp.mp.dps = 40
T = (mp.pi / 4) ** 2 * (1 + mp.mpf(2) ** -20)


TERMS = 30  # Taylor terms: the 30th is below 1e-80 for t <= T


def g(t):  # (sin r - r) / r^3 by its Taylor series: no cancellation near t = 0
    return mp.fsum((-1) ** (k + 1) * t ** k / mp.factorial(2 * k + 3) for k in range(TERMS))


def h(t):  # (cos r - 1 + t/2) / t^2
    return mp.fsum((-1) ** k * t ** k / mp.factorial(2 * k + 4) for k in range(TERMS))


def remez(f, w, degree, iterations=12):
    """Coefficients c_0..c_degree of the minimax polynomial for weight w, and the error."""
    n = degree + 2
    # Start from Chebyshev extrema mapped onto [0, T].
    x = [T / 2 * (1 - mp.cos(mp.pi * i / (n - 1))) for i in range(n)]
    grid = [T * i / 2000 for i in range(2001)]
    for _ in range(iterations):
        # Solve sum_j c_j x_i^j + (-1)^i E / w(x_i) = f(x_i).
        a = mp.matrix(n, n)
        b = mp.matrix(n, 1)
        for i, xi in enumerate(x):
            for j in range(degree + 1):
                a[i, j] = xi ** j
            a[i, n - 1] = (-1) ** i / w(xi) if w(xi) != 0 else (-1) ** i * mp.mpf(10) ** 30
            b[i] = f(xi)
        sol = mp.lu_solve(a, b)
        c = [sol[j] for j in range(degree + 1)]
        err = lambda t: w(t) * (mp.polyval(c[::-1], t) - f(t))
        values = [err(t) for t in grid]
        # New reference: the extremum of each run of equal error sign.
        runs, start = [], 0
        for i in range(1, len(grid) + 1):
            if i == len(grid) or mp.sign(values[i]) != mp.sign(values[start]):
                k = max(range(start, i), key=lambda j: abs(values[j]))
                runs.append(grid[k])
                start = i
        if len(runs) < n:
            break
        # Keep the n alternating extrema with the largest error.
        while len(runs) > n:
            ends = [abs(err(runs[0])), abs(err(runs[-1]))]
            runs.pop(0 if ends[0] < ends[1] else -1)
        x = runs
    return c, max(abs(v) for v in values)


def split(value, bits, parts):
    """value = sum of parts; the first parts - 1 keep `bits` significant bits, the last is a double."""
    out, rest = [], value
    for _ in range(parts - 1):
        exponent = mp.floor(mp.log(abs(rest), 2))
        step = mp.mpf(2) ** (exponent - bits + 1)
        head = mp.nint(rest / step) * step
        out.append(head)
        rest -= head
    out.append(rest)
    return out


def show(name, values, precision):
    digits = 17 if precision == "double" else 9
    suffix = "" if precision == "double" else "f"
    print("    // " + name)
    for v in values:
        print("    " + mp.nstr(v, digits, strip_zeros=False, min_fixed=0, max_fixed=0) + suffix + ",")


for precision, sin_degree, cos_degree, bits in (("double", 5, 5, 33), ("float", 2, 2, 12)):
    p, perr = remez(g, lambda t: t, sin_degree)
    q, qerr = remez(h, lambda t: t * t, cos_degree)
    print(f"{precision}: sine polynomial error {mp.nstr(perr, 3)} (relative), "
          f"cosine {mp.nstr(qerr, 3)} (absolute)")
    show("sine, c_0 .. c_{}".format(sin_degree), p, precision)
    show("cosine, c_0 .. c_{}".format(cos_degree), q, precision)
    zero_bits = (53 if precision == "double" else 24) - bits
    show(f"pi/2 = C1 + C2 + C3, C1 and C2 with {bits} significant bits "
         f"(q * C exact for |q| < 2^{zero_bits})", split(mp.pi / 2, bits, 3), precision)
