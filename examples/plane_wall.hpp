// plane_wall.hpp — transient conduction in a plane wall cooled by convection.
//
// This is the heat-treatment demo's "expensive inner-loop function": the exact
// series solution for the dimensionless temperature of a plane wall of
// half-thickness L, initially at uniform temperature T_i, suddenly exposed on
// both faces to a fluid at T_inf with heat-transfer coefficient h.
//
// Source: F. P. Incropera and D. P. DeWitt, Fundamentals of Heat and Mass
// Transfer, section 5.5 (plane wall with convection), eqs. 5.39a-c and the
// one-term approximation, eqs. 5.40-5.41 with Table 5.1.
//
//   theta(x*, Bi, Fo) = (T - T_inf) / (T_i - T_inf)
//                     = sum_{n>=1} C_n exp(-zeta_n^2 Fo) cos(zeta_n x*)
//   C_n   = 4 sin(zeta_n) / (2 zeta_n + sin(2 zeta_n))
//   zeta_n tan(zeta_n) = Bi,  zeta_n in ((n-1) pi, (n-1) pi + pi/2)
//
// with x* = x / L in [0, 1] (x* = 0 mid-plane, x* = 1 surface), Bi = h L / k and
// Fo = alpha t / L^2.
//
// The eigenvalues are found on every call, as a production code that calls this
// per part per time step would do; that is what makes it costly (about half a
// microsecond over the demo's domain) and worth replacing by a surrogate.
#pragma once

#include <charconv>
#include <cmath>
#include <stdexcept>
#include <string>

namespace plane_wall {

namespace detail {

constexpr double kPi = 3.141592653589793238462643383279502884;

// Largest |C_n| over all n and Bi: C_1 -> 4 / pi as Bi -> infinity; |C_n| for
// n >= 2 stays below 4 / (2 (n-1) pi - 1) < 1. Used to bound the series tail.
constexpr double kCoefficientBound = 1.3;

// The series is summed until the bound on the neglected terms is below this.
constexpr double kTailTolerance = 1e-12;

// Below this Fourier number the series needs more than ~17 000 terms; such
// early times belong to the semi-infinite-solid solution instead.
constexpr double kMinimumFourier = 1e-8;

// Shortest text that reads back as the same double (1e-09, not 1.0000000000000001e-09).
inline std::string describe(double value)
{
    char buffer[32];
    const auto result = std::to_chars(buffer, buffer + sizeof buffer, value);
    return std::string(buffer, result.ptr);
}

inline void requireFinitePositive(const char* where, const char* name, double value)
{
    if (!std::isfinite(value) || !(value > 0.0))
        throw std::invalid_argument(std::string("plane_wall::") + where + "(): expected " + name
                                    + " to be a finite number > 0, got " + describe(value));
}

inline void checkInputs(const char* where, double xStar, double biot, double fourier)
{
    if (!(xStar >= 0.0 && xStar <= 1.0)) // also rejects NaN
        throw std::invalid_argument(std::string("plane_wall::") + where
                                    + "(): expected x* = x/L in [0, 1], got " + describe(xStar));
    requireFinitePositive(where, "the Biot number", biot);
    requireFinitePositive(where, "the Fourier number", fourier);
    if (fourier < kMinimumFourier)
        throw std::invalid_argument(std::string("plane_wall::") + where
                                    + "(): expected Fourier number >= 1e-8 (the series would need "
                                      "too many terms; use the semi-infinite solid), got "
                                    + describe(fourier));
}

} // namespace detail

/// n-th positive root (n = 1, 2, ...) of zeta tan(zeta) = Bi.
///
/// Solved as f(z) = z sin z - Bi cos z = 0, which has the same roots but no
/// poles, by Newton's method safeguarded by bisection inside the bracket
/// ((n-1) pi, (n-1) pi + pi/2), where f changes sign. Converged to about 1e-14
/// relative (a few ulp).
inline double eigenvalue(int n, double biot)
{
    if (n < 1)
        throw std::invalid_argument("plane_wall::eigenvalue(): expected root index n >= 1, got "
                                    + std::to_string(n));
    detail::requireFinitePositive("eigenvalue", "the Biot number", biot);

    using detail::kPi;
    const double offset = (n - 1) * kPi;
    double lower = offset;
    double upper = offset + 0.5 * kPi;
    // Multiply f by sign so that it is negative at `lower` and positive at
    // `upper`: f((n-1) pi) = -Bi (-1)^(n-1), f((n-1) pi + pi/2) = z (-1)^(n-1).
    const double sign = (n % 2 == 1) ? 1.0 : -1.0;
    auto residual = [&](double z) { return sign * (z * std::sin(z) - biot * std::cos(z)); };
    auto slope = [&](double z) { return sign * ((1.0 + biot) * std::sin(z) + z * std::cos(z)); };

    // Starting point: tan(t) ~ Bi / z for the offset t = z - (n-1) pi; for the
    // first root, the small-Bi form t^2 ~ Bi / (1 + Bi/3) and the large-Bi form
    // t ~ (pi/2) Bi / (1 + Bi).
    double z;
    if (n == 1)
        z = biot < 2.0 ? std::sqrt(biot / (1.0 + biot / 3.0)) : 0.5 * kPi * biot / (1.0 + biot);
    else
        z = offset + std::atan(biot / (offset + 0.25 * kPi));
    if (!(z > lower && z < upper))
        z = 0.5 * (lower + upper);

    for (int iteration = 0; iteration < 200; ++iteration) {
        const double value = residual(z);
        if (value == 0.0)
            return z;
        if (value < 0.0)
            lower = z;
        else
            upper = z;

        double next = z - value / slope(z);
        if (!(next >= lower && next <= upper)) // Newton left the bracket: bisect
            next = 0.5 * (lower + upper);
        else if (std::abs(next - z) <= 1e-15 * z) // converged (quadratically)
            return next;
        z = next;
        if (upper - lower <= 4e-16 * z)
            return z;
    }
    return z; // not reached in practice: bisection alone converges in ~55 steps
}

/// Series coefficient C_n = 4 sin(zeta_n) / (2 zeta_n + sin(2 zeta_n)).
inline double coefficient(double zeta)
{
    return 4.0 * std::sin(zeta) / (2.0 * zeta + std::sin(2.0 * zeta));
}

/// Exact (series) dimensionless temperature theta(x*, Bi, Fo).
///
/// Terms are added until the neglected tail is provably below 1e-12: after n
/// terms every remaining root exceeds j pi (j >= n), |C| <= 1.3, and
/// j^2 >= n^2 + 2 n (j - n), so the tail is at most the geometric sum
/// 1.3 exp(-(n pi)^2 Fo) / (1 - exp(-2 n pi^2 Fo)).
inline double temperature(double xStar, double biot, double fourier)
{
    detail::checkInputs("temperature", xStar, biot, fourier);
    using detail::kPi;
    double sum = 0.0;
    for (int n = 1;; ++n) {
        const double zeta = eigenvalue(n, biot);
        sum += coefficient(zeta) * std::exp(-zeta * zeta * fourier) * std::cos(zeta * xStar);

        const double nextFloor = n * kPi; // zeta_{n+1} > n pi
        const double tail = detail::kCoefficientBound * std::exp(-nextFloor * nextFloor * fourier)
                            / (1.0 - std::exp(-2.0 * n * kPi * kPi * fourier));
        if (tail < detail::kTailTolerance)
            return sum;
    }
}

/// One-term approximation theta ~ C_1 exp(-zeta_1^2 Fo) cos(zeta_1 x*)
/// (Incropera & DeWitt eq. 5.40), recommended there for Fo > 0.2.
inline double temperatureOneTerm(double xStar, double biot, double fourier)
{
    detail::checkInputs("temperatureOneTerm", xStar, biot, fourier);
    const double zeta = eigenvalue(1, biot);
    return coefficient(zeta) * std::exp(-zeta * zeta * fourier) * std::cos(zeta * xStar);
}

} // namespace plane_wall
