// Tests of the vectorised sine and cosine (detail/sincos.hpp) and of the
// array kernel built on it (detail/simd.hpp).
//
// Reference: the C library's long double sinl and cosl (11 or more bits
// beyond double on x86-64 and on quad-precision targets), so the reference's
// own error is far below the bounds. The bounds are the measured maxima
// (10^6 angles per range, recorded in detail/sincos.hpp) plus a margin.
#include <doctest/doctest.h>

#include <cmath>
#include <limits>
#include <vector>

#include <wavestack/core/random.hpp>
#include <wavestack/detail/simd.hpp>

using namespace wavestack;

namespace {

/// Largest |computed - exact| over `count` angles uniform in [-range, range].
template <class T>
long double largestError(double range, Index count)
{
    Random random(11);
    std::vector<T> angle(static_cast<std::size_t>(count)), sine(angle.size()), cosine(angle.size());
    for (T& a : angle)
        a = T((2.0 * random.uniform() - 1.0) * range);
    detail::sincos(angle.data(), sine.data(), cosine.data(), count);
    long double largest = 0;
    for (std::size_t i = 0; i < angle.size(); ++i) {
        const long double a = angle[i];
        largest = std::max({largest, std::abs(sine[i] - std::sin(a)), std::abs(cosine[i] - std::cos(a))});
    }
    return largest;
}

}  // namespace

TEST_CASE("double sine and cosine are within 2.5e-16 of the exact values for |x| up to 1e6")
{
    // Measured: 1.4e-16 on [-pi/4, pi/4], 2.1e-16 up to 9e5 (about one ulp of 1).
    for (double range : {0.7853981633974483, 3.2, 200.0, 1e4, 9.9e5}) {
        CAPTURE(range);
        CHECK(largestError<double>(range, 100000) < 2.5e-16L);
    }
}

TEST_CASE("float sine and cosine are within 1.5e-7 of the exact values for |x| up to 6000")
{
    // Measured: 7.4e-8 on [-pi/4, pi/4], 1.1e-7 up to 5000 (float's ulp of 1 is 1.2e-7).
    for (double range : {0.7853981633974483, 3.2, 200.0, 5900.0}) {
        CAPTURE(range);
        CHECK(largestError<float>(range, 100000) < 1.5e-7L);
    }
}

TEST_CASE("angles at and next to every quadrant boundary")
{
    // Where the quadrant index changes, sine and cosine swap and change sign.
    std::vector<double> angle;
    for (int k = -9; k <= 9; ++k)
        for (double offset : {-1e-9, -1e-15, 0.0, 1e-15, 1e-9}) {
            const double boundary = k * 1.5707963267948966 + offset;
            angle.push_back(boundary);
            angle.push_back(std::nextafter(boundary, 1e300));
        }
    std::vector<double> sine(angle.size()), cosine(angle.size());
    detail::sincos(angle.data(), sine.data(), cosine.data(), Index(angle.size()));
    for (std::size_t i = 0; i < angle.size(); ++i) {
        CAPTURE(angle[i]);
        CHECK(std::abs(sine[i] - std::sin(static_cast<long double>(angle[i]))) < 2.5e-16L);
        CHECK(std::abs(cosine[i] - std::cos(static_cast<long double>(angle[i]))) < 2.5e-16L);
    }
}

TEST_CASE("huge, infinite and NaN angles: the C library's answer in their lanes, the others unharmed")
{
    const double inf = std::numeric_limits<double>::infinity(), nan = std::numeric_limits<double>::quiet_NaN();
    // 17 values: every lane of the widest batch, and a scalar tail.
    std::vector<double> angle = {0.5, 2e6, -1e300, inf, -inf, nan, 3.0, -7.5, 1.0e6 + 0.5,
                                 1.25, 123.0, -0.1, 4e15, 0.0, -0.0, 1e-300, 2.0};
    std::vector<double> sine(angle.size()), cosine(angle.size());
    detail::sincos(angle.data(), sine.data(), cosine.data(), Index(angle.size()));
    for (std::size_t i = 0; i < angle.size(); ++i) {
        CAPTURE(angle[i]);
        if (std::isnan(angle[i]) || std::isinf(angle[i])) {
            CHECK(std::isnan(sine[i]));
            CHECK(std::isnan(cosine[i]));
        } else if (std::abs(angle[i]) > 1e6) {
            CHECK(sine[i] == std::sin(angle[i]));
            CHECK(cosine[i] == std::cos(angle[i]));
        } else {
            CHECK(std::abs(sine[i] - std::sin(static_cast<long double>(angle[i]))) < 2.5e-16L);
            CHECK(std::abs(cosine[i] - std::cos(static_cast<long double>(angle[i]))) < 2.5e-16L);
        }
    }
}

TEST_CASE("sincos may write the cosine over its input")
{
    Vector angle = Vector::LinSpaced(13, -3.0, 3.0);
    const Vector original = angle;
    Vector sine(13);
    detail::sincos(angle.data(), sine.data(), angle.data(), 13);
    for (Index i = 0; i < 13; ++i)
        CHECK(angle[i] == doctest::Approx(std::cos(original[i])).epsilon(1e-15));
}
