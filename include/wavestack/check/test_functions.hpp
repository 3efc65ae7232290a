#pragma once
/// \file
/// Standard published test functions, for accuracy suites, benchmarks and tests.
///
/// Each function takes its inputs in their natural (physical) units as a plain
/// array, `double f(const double* x)`, in the order of the published definition,
/// and has a companion `...Domain()` giving its standard input domain. Formulas
/// were written from memory of the cited sources and are cross-checked against an
/// independent numpy/scipy implementation (tests/reference/test_functions_reference.py).

#include <cmath>
#include <complex>
#include <cstddef>
#include <limits>
#include <string>
#include <vector>

#include "wavestack/core/error.hpp"
#include "wavestack/core/random.hpp"
#include "wavestack/core/types.hpp"

namespace wavestack {
namespace test_functions {

/// How a test function's inputs are conventionally drawn.
enum class Distribution {
    uniform,         ///< independently uniform on [lower_i, upper_i]
    standardNormal,  ///< x ~ N(0, I_d); lower/upper are then -inf/+inf (the support)
};

/// Standard input domain of a test function: one entry per input.
struct Domain {
    std::vector<double> lower, upper;
    Distribution distribution = Distribution::uniform;

    int dimension() const { return static_cast<int>(lower.size()); }
};

namespace detail {

constexpr double pi = 3.141592653589793238462643383279502884;

/// Si(x) for 0 <= x <= 4: the Maclaurin series sum (-1)^n x^(2n+1) / ((2n+1) (2n+1)!)
/// (Abramowitz & Stegun 5.2.14). Up to x = 4 the terms' magnitudes add to at most
/// about 6 Si(x), so the alternating sum loses only a few ulps to cancellation.
inline double sineIntegralSeries(double x)
{
    const double x2 = x * x;
    double term = x;  // x^(2n+1) / (2n+1)!, sign included
    double sum = x;
    for (int n = 1; n < 40; ++n) {
        term *= -x2 / ((2.0 * n) * (2.0 * n + 1.0));
        const double add = term / (2.0 * n + 1.0);
        sum += add;
        if (std::abs(add) <= 1e-17 * std::abs(sum))
            break;
    }
    return sum;
}

/// Si(x) for x > 4 through E1(ix) = -Ci(x) + i (Si(x) - pi/2) (A&S 5.2.23), i.e.
/// Si = pi/2 + Im E1(ix), with E1(z) = e^(-z) (1/(z+1-) 1/(z+3-) 4/(z+5-) ...), the
/// even continued fraction of A&S 5.1.22, evaluated by the modified Lentz algorithm
/// (Thompson & Barnett 1986, J. Comput. Phys. 64, 490). This is equivalent to
/// Si = pi/2 - f(x) cos x - g(x) sin x with the auxiliary functions f, g of
/// A&S 5.2.8-9. The fraction converges for every x > 0, quickly once x is a few units.
inline double sineIntegralContinuedFraction(double x)
{
    using Complex = std::complex<double>;
    constexpr double epsilon = std::numeric_limits<double>::epsilon();
    constexpr double tiny = 1e-300;  // Lentz's guard against a zero denominator
    Complex b(1.0, x);
    Complex c(1.0 / tiny, 0.0);
    Complex d = 1.0 / b;
    Complex h = d;
    for (int i = 1; i < 1000; ++i) {
        const double a = -static_cast<double>(i) * i;
        b += 2.0;
        d = 1.0 / (a * d + b);
        c = b + a / c;
        const Complex delta = c * d;
        h *= delta;
        if (std::abs(delta.real() - 1.0) + std::abs(delta.imag()) <= epsilon)
            break;
    }
    h *= Complex(std::cos(x), -std::sin(x));  // times e^(-ix)
    return 0.5 * pi + h.imag();
}

}  // namespace detail

/// Sine integral Si(x) = int_0^x sin(t)/t dt (A&S 5.2.1), to about 1e-15 relative.
/// Odd; Si(+-inf) = +-pi/2; NaN in, NaN out.
inline double sineIntegral(double x)
{
    if (std::isnan(x))
        return x;
    const double magnitude = std::abs(x);
    double value;
    if (magnitude <= 4.0)
        value = detail::sineIntegralSeries(magnitude);
    else if (std::isinf(magnitude))
        value = 0.5 * detail::pi;  // cos/sin of inf are NaN: take the limit directly
    else
        value = detail::sineIntegralContinuedFraction(magnitude);
    return x < 0.0 ? -value : value;
}

/// Si(x_1 / a) exp(-|x|^2 / 2), x in R^d: a discontinuity at x_1 = 0 regularised over
/// a width a, times a Gaussian. From Kammonen, Kiessling, Plechac, Sandberg & Szepessy,
/// "Adaptive random Fourier features with Metropolis sampling" (2020), with x ~ N(0, I_d).
/// Throws InvalidInput unless d >= 1 and a > 0.
inline double siFront(const double* x, int d, double a)
{
    if (d < 1)
        throw InvalidInput("siFront: dimension d = " + std::to_string(d) + " must be at least 1");
    if (!(a > 0.0))
        throw InvalidInput("siFront: width a = " + std::to_string(a) + " must be positive");
    double squaredNorm = 0.0;
    for (int i = 0; i < d; ++i)
        squaredNorm += x[i] * x[i];
    return sineIntegral(x[0] / a) * std::exp(-0.5 * squaredNorm);
}

/// siFront's inputs: standard normal in d dimensions.
inline Domain siFrontDomain(int d)
{
    if (d < 1)
        throw InvalidInput("siFrontDomain: dimension d = " + std::to_string(d) +
                           " must be at least 1");
    constexpr double infinity = std::numeric_limits<double>::infinity();
    const auto size = static_cast<std::size_t>(d);
    return {std::vector<double>(size, -infinity), std::vector<double>(size, infinity),
            Distribution::standardNormal};
}

/// Ishigami & Homma (1990), with the customary a = 7, b = 0.1:
/// sin x1 + a sin^2 x2 + b x3^4 sin x1.
inline double ishigami(const double* x)
{
    const double s1 = std::sin(x[0]);
    const double s2 = std::sin(x[1]);
    const double x3Squared = x[2] * x[2];
    return s1 + 7.0 * s2 * s2 + 0.1 * x3Squared * x3Squared * s1;
}

/// Ishigami inputs: [-pi, pi]^3.
inline Domain ishigamiDomain()
{
    return {{-detail::pi, -detail::pi, -detail::pi}, {detail::pi, detail::pi, detail::pi}};
}

/// Borehole water flow rate, m^3/yr (Harper & Gupta 1983; as given in Surjanovic &
/// Bingham, Virtual Library of Simulation Experiments):
///   2 pi Tu (Hu - Hl) / (ln(r/rw) (1 + 2 L Tu / (ln(r/rw) rw^2 Kw) + Tu/Tl)).
/// x = (rw, r, Tu, Hu, Tl, Hl, L, Kw).
inline double borehole(const double* x)
{
    const double rw = x[0], r = x[1], tu = x[2], hu = x[3], tl = x[4], hl = x[5], l = x[6],
                 kw = x[7];
    const double logRatio = std::log(r / rw);
    return 2.0 * detail::pi * tu * (hu - hl) /
        (logRatio * (1.0 + 2.0 * l * tu / (logRatio * rw * rw * kw) + tu / tl));
}

/// Borehole ranges (Surjanovic & Bingham): rw [0.05, 0.15] m, r [100, 50000] m,
/// Tu [63070, 115600] m^2/yr, Hu [990, 1110] m, Tl [63.1, 116] m^2/yr, Hl [700, 820] m,
/// L [1120, 1680] m, Kw [9855, 12045] m/yr.
inline Domain boreholeDomain()
{
    return {{0.05, 100.0, 63070.0, 990.0, 63.1, 700.0, 1120.0, 9855.0},
            {0.15, 50000.0, 115600.0, 1110.0, 116.0, 820.0, 1680.0, 12045.0}};
}

/// Output transformerless (OTL) push-pull circuit midpoint voltage Vm, volts (Ben-Ari &
/// Steinberg 2007; as given in Surjanovic & Bingham), with Vb1 = 12 Rb2 / (Rb1 + Rb2):
///   (Vb1 + 0.74) B / (B + Rf) + 11.35 Rf / (B + Rf) + 0.74 Rf B / ((B + Rf) Rc1),
/// where B = beta (Rc2 + 9). x = (Rb1, Rb2, Rf, Rc1, Rc2, beta).
inline double otlCircuit(const double* x)
{
    const double rb1 = x[0], rb2 = x[1], rf = x[2], rc1 = x[3], rc2 = x[4], beta = x[5];
    const double vb1 = 12.0 * rb2 / (rb1 + rb2);
    const double gain = beta * (rc2 + 9.0);
    const double denominator = gain + rf;
    return (vb1 + 0.74) * gain / denominator + 11.35 * rf / denominator +
        0.74 * rf * gain / (denominator * rc1);
}

/// OTL ranges: Rb1 [50, 150], Rb2 [25, 70], Rf [0.5, 3], Rc1 [1.2, 2.5], Rc2 [0.25, 1.2]
/// (kOhm), beta [50, 300] (current gain).
inline Domain otlCircuitDomain()
{
    return {{50.0, 25.0, 0.5, 1.2, 0.25, 50.0}, {150.0, 70.0, 3.0, 2.5, 1.2, 300.0}};
}

/// Piston cycle time, seconds (Kenett & Zacks 1998; as given in Surjanovic & Bingham):
///   C = 2 pi sqrt(M / (k + S^2 P0 V0 Ta / (T0 V^2))),
///   V = S / (2k) (sqrt(A^2 + 4 k P0 V0 Ta / T0) - A),  A = P0 S + 19.62 M - k V0 / S.
/// x = (M, S, V0, k, P0, Ta, T0).
inline double piston(const double* x)
{
    const double m = x[0], s = x[1], v0 = x[2], k = x[3], p0 = x[4], ta = x[5], t0 = x[6];
    const double a = p0 * s + 19.62 * m - k * v0 / s;
    const double c = 4.0 * k * p0 * v0 * ta / t0;
    const double root = std::sqrt(a * a + c);
    // sqrt(A^2 + c) - A cancels when A >> 0; c / (sqrt(A^2 + c) + A) is the same number.
    const double v = s / (2.0 * k) * (a > 0.0 ? c / (root + a) : root - a);
    return 2.0 * detail::pi * std::sqrt(m / (k + s * s * p0 * v0 * ta / (t0 * v * v)));
}

/// Piston ranges: M [30, 60] kg, S [0.005, 0.020] m^2, V0 [0.002, 0.010] m^3,
/// k [1000, 5000] N/m, P0 [90000, 110000] N/m^2, Ta [290, 296] K, T0 [340, 360] K.
inline Domain pistonDomain()
{
    return {{30.0, 0.005, 0.002, 1000.0, 90000.0, 290.0, 340.0},
            {60.0, 0.020, 0.010, 5000.0, 110000.0, 296.0, 360.0}};
}

/// Light aircraft wing weight, lb (Forrester, Sobester & Keane 2008; as given in
/// Surjanovic & Bingham):
///   0.036 Sw^0.758 Wfw^0.0035 (A / cos^2 Lambda)^0.6 q^0.006 lambda^0.04
///   (100 tc / cos Lambda)^-0.3 (Nz Wdg)^0.49 + Sw Wp.
/// x = (Sw, Wfw, A, Lambda [degrees], q, lambda, tc, Nz, Wdg, Wp).
inline double wingWeight(const double* x)
{
    const double sw = x[0], wfw = x[1], aspect = x[2], q = x[4], taper = x[5], tc = x[6], nz = x[7],
                 wdg = x[8], wp = x[9];
    const double cosSweep = std::cos(x[3] * (detail::pi / 180.0));
    return 0.036 * std::pow(sw, 0.758) * std::pow(wfw, 0.0035) *
        std::pow(aspect / (cosSweep * cosSweep), 0.6) * std::pow(q, 0.006) * std::pow(taper, 0.04) *
        std::pow(100.0 * tc / cosSweep, -0.3) * std::pow(nz * wdg, 0.49) +
        sw * wp;
}

/// Wing weight ranges: Sw [150, 200] ft^2, Wfw [220, 300] lb, A [6, 10],
/// Lambda [-10, 10] degrees, q [16, 45] lb/ft^2, lambda [0.5, 1], tc [0.08, 0.18],
/// Nz [2.5, 6], Wdg [1700, 2500] lb, Wp [0.025, 0.08] lb/ft^2.
inline Domain wingWeightDomain()
{
    return {{150.0, 220.0, 6.0, -10.0, 16.0, 0.5, 0.08, 2.5, 1700.0, 0.025},
            {200.0, 300.0, 10.0, 10.0, 45.0, 1.0, 0.18, 6.0, 2500.0, 0.08}};
}

/// Friedman (1991), "Multivariate adaptive regression splines", Ann. Statist. 19:
/// 10 sin(pi x1 x2) + 20 (x3 - 0.5)^2 + 10 x4 + 5 x5. Ten inputs, x6..x10 inert
/// (they test that a method ignores irrelevant inputs).
inline double friedman1(const double* x)
{
    const double shifted = x[2] - 0.5;
    return 10.0 * std::sin(detail::pi * x[0] * x[1]) + 20.0 * shifted * shifted + 10.0 * x[3] +
        5.0 * x[4];
}

/// Friedman #1 inputs: [0, 1]^10.
inline Domain friedman1Domain()
{
    return {std::vector<double>(10, 0.0), std::vector<double>(10, 1.0)};
}

/// Darcy friction factor f of turbulent pipe flow from the Colebrook (1939) equation
///   1 / sqrt f = -2 log10(eps/D / 3.7 + 2.51 / (Re sqrt f)),
/// solved by Newton's method in y = 1/sqrt f. The residual
/// g(y) = y + 2 log10(eps/D / 3.7 + 2.51 y / Re) is increasing and concave, so after
/// the first step every iterate lies below the root and rises monotonically to it.
/// Start: the explicit Swamee & Jain (1976) approximation, within a few percent.
/// Meant for Re in [4000, 1e8], eps/D in [1e-6, 5e-2]; NaN for Re <= 0, eps/D < 0, or
/// either not finite.
inline double colebrookFriction(double reynolds, double relativeRoughness)
{
    if (!(reynolds > 0.0) || !(relativeRoughness >= 0.0) || std::isinf(reynolds) ||
        std::isinf(relativeRoughness))
        return std::numeric_limits<double>::quiet_NaN();
    const double roughTerm = relativeRoughness / 3.7;
    const double viscousTerm = 2.51 / reynolds;
    constexpr double twoOverLn10 = 2.0 / 2.302585092994045684017991454684364208;
    // Swamee-Jain: f = 0.25 / log10(eps/(3.7 D) + 5.74 / Re^0.9)^2, so y = -2 log10(...).
    double y = -2.0 * std::log10(roughTerm + 5.74 / std::pow(reynolds, 0.9));
    for (int iteration = 0; iteration < 50; ++iteration) {
        const double argument = roughTerm + viscousTerm * y;
        const double residual = y + 2.0 * std::log10(argument);
        const double slope = 1.0 + twoOverLn10 * viscousTerm / argument;
        const double step = residual / slope;
        y -= step;
        // Quadratic convergence: once the step is ~1e-8 relative, the next one is at
        // rounding level, so stopping at 1e-15 relative leaves f good to ~1e-15.
        if (std::abs(step) <= 1e-15 * std::abs(y))
            break;
    }
    return 1.0 / (y * y);
}

/// colebrookFriction over the inputs x = (log10 Re, log10 eps/D): the log scale is the
/// natural one (Moody's chart is drawn in it) and makes the standard domain a box whose
/// uniform samples cover all decades evenly.
inline double colebrook(const double* x)
{
    return colebrookFriction(std::pow(10.0, x[0]), std::pow(10.0, x[1]));
}

/// Colebrook inputs: log10 Re in [log10 4000, 8], log10 eps/D in [-6, log10 0.05].
inline Domain colebrookDomain()
{
    return {{std::log10(4000.0), -6.0}, {8.0, std::log10(0.05)}};
}

/// Inputs (rows = points) and one output column.
struct Sample {
    Matrix x, y;
};

/// n points drawn from `domain` (uniform on its box, or N(0, I)), point by
/// point and input by input from `random`, with y = f(point) for
/// `double f(const double* point)`.
template <class Function>
Sample drawSample(const Domain& domain, Index n, Random& random, Function f)
{
    const int d = domain.dimension();
    Sample sample{Matrix(n, d), Matrix(n, 1)};
    std::vector<double> point(static_cast<std::size_t>(d));
    for (Index i = 0; i < n; ++i) {
        for (int j = 0; j < d; ++j) {
            const auto k = static_cast<std::size_t>(j);
            point[k] = domain.distribution == Distribution::standardNormal
                           ? random.normal()
                           : domain.lower[k] + (domain.upper[k] - domain.lower[k]) * random.uniform();
            sample.x(i, j) = point[k];
        }
        sample.y(i, 0) = f(point.data());
    }
    return sample;
}

/// n points of the Si-front in d dimensions, x ~ N(0, I_d).
inline Sample drawSiFront(Index n, int d, double a, Random& random)
{
    return drawSample(siFrontDomain(d), n, random, [&](const double* x) { return siFront(x, d, a); });
}

}  // namespace test_functions
}  // namespace wavestack
