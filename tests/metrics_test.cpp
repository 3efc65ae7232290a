// Tests of the error metrics (check/metrics.hpp).
#include <doctest/doctest.h>

#include <cmath>

#include <wavestack/check/metrics.hpp>
#include <wavestack/core/error.hpp>

using namespace wavestack;

TEST_CASE("metrics match numpy and scipy")
{
    // Values printed by tests/reference/metrics_reference.py (numpy 1.24, scipy 1.10).
    Vector reference(8), predicted(8);
    reference << 0.3, -1.2, 2.5, 0.0, 4.1, -0.7, 1.9, 3.3;
    predicted << 0.25, -1.0, 2.7, 0.1, 3.8, -0.9, 2.0, 3.1;
    const ErrorMetrics m = measureErrors(predicted, reference);
    CHECK(m.rmse == doctest::Approx(0.18456028825291745).epsilon(1e-14));
    CHECK(m.relativeRmse == doctest::Approx(0.1012620270315208).epsilon(1e-14));
    CHECK(m.maxAbsError == doctest::Approx(0.29999999999999982).epsilon(1e-14));
    CHECK(m.rSquared == doctest::Approx(0.98974600188146755).epsilon(1e-14));
    CHECK(m.correlation == doctest::Approx(0.99547361711170734).epsilon(1e-14));
}

TEST_CASE("a perfect prediction has zero error and unit R^2 and correlation")
{
    Vector r(4);
    r << 1.0, 2.0, 4.0, 8.0;
    const ErrorMetrics m = measureErrors(r, r);
    CHECK(m.rmse == 0.0);
    CHECK(m.relativeRmse == 0.0);
    CHECK(m.rSquared == 1.0);
    CHECK(m.correlation == doctest::Approx(1.0));
}

TEST_CASE("a constant reference gives defined limits, not silent NaN in the errors")
{
    const Vector r = Vector::Constant(5, 2.0);
    const Vector p = Vector::Constant(5, 2.5);
    const ErrorMetrics m = measureErrors(p, r);
    CHECK(m.rmse == doctest::Approx(0.5));
    CHECK(std::isinf(m.relativeRmse));
    CHECK(std::isinf(m.rSquared));
    CHECK(std::isnan(m.correlation));  // documented: undefined for constant series
}

TEST_CASE("column metrics equal per-column metrics")
{
    Matrix r(3, 2), p(3, 2);
    r << 1, 2, 3, 5, 4, 1;
    p << 1.1, 2, 2.9, 4, 4, 1.5;
    const auto all = measureColumnErrors(p, r);
    REQUIRE(all.size() == 2);
    CHECK(all[1].rmse == measureErrors(p.col(1), r.col(1)).rmse);
}

TEST_CASE("bad input is rejected")
{
    Vector a(3), b(2);
    a << 1, 2, 3;
    b << 1, 2;
    CHECK_THROWS_AS(measureErrors(a, b), InvalidInput);
    CHECK_THROWS_AS(measureErrors(Vector(), Vector()), InvalidInput);
    a[1] = std::nan("");
    CHECK_THROWS_WITH_AS(measureErrors(a, a), doctest::Contains("row 1"), InvalidInput);
    CHECK_THROWS_AS(measureColumnErrors(Matrix(3, 2), Matrix(3, 1)), InvalidInput);
}
