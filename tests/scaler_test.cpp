// Tests of the input and output scalers (model/scaler.hpp).
#include <doctest/doctest.h>

#include <wavestack/core/error.hpp>
#include <wavestack/model/scaler.hpp>

using namespace wavestack;

TEST_CASE("inputs map onto [-1, 1] from the data's bounding box")
{
    Matrix x(3, 2);
    x << 0.0, 10.0, 5.0, 30.0, 2.0, 20.0;
    const Matrix u = InputScaler::fromData(x).apply(x);
    CHECK(u(0, 0) == doctest::Approx(-1.0));
    CHECK(u(1, 0) == doctest::Approx(1.0));
    CHECK(u(2, 0) == doctest::Approx(-0.2));
    CHECK(u(0, 1) == doctest::Approx(-1.0));
    CHECK(u(1, 1) == doctest::Approx(1.0));
    CHECK(u(2, 1) == doctest::Approx(0.0));
}

TEST_CASE("a user-given box is used as given")
{
    Vector lower(1), upper(1);
    lower << -2.0;
    upper << 2.0;
    Matrix x(1, 1);
    x << 1.0;
    CHECK(InputScaler(InputBox{lower, upper}).apply(x)(0, 0) == doctest::Approx(0.5));
}

TEST_CASE("a constant input column is shifted, never divided by zero")
{
    Matrix x(3, 2);
    x << 1.0, 7.0, 2.0, 7.0, 3.0, 7.0;
    const InputScaler scaler = InputScaler::fromData(x);
    const Matrix u = scaler.apply(x);
    CHECK(u.allFinite());
    CHECK(u.col(1).isZero());
    CHECK(scaler.scale()[1] == 1.0);
}

TEST_CASE("outputs are standardised per column; a constant column keeps deviation 1")
{
    Matrix y(4, 2);
    y << 1.0, 3.0, 2.0, 3.0, 3.0, 3.0, 4.0, 3.0;
    const OutputScaler scaler = OutputScaler::fromData(y);
    const Matrix s = scaler.apply(y);
    CHECK(s.col(0).mean() == doctest::Approx(0.0));
    CHECK(s.col(0).squaredNorm() / 4.0 == doctest::Approx(1.0));
    CHECK(scaler.deviation()[1] == 1.0);
    CHECK(s.col(1).isZero());
}

TEST_CASE("a malformed box is rejected")
{
    Vector lower(2), upper(2), short_(1);
    lower << 0.0, 1.0;
    upper << 1.0, 0.0;
    short_ << 1.0;
    CHECK_THROWS_WITH_AS(InputScaler(InputBox{lower, upper}), doctest::Contains("column 1"), InvalidInput);
    CHECK_THROWS_AS(InputScaler(InputBox{lower, short_}), InvalidInput);
}
