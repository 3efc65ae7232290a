// Tests of the leave-one-out ridge errors (solve/ridge_loo.hpp).
#include <doctest/doctest.h>

#include <cmath>
#include <limits>
#include <vector>

#include <wavestack/core/error.hpp>
#include <wavestack/core/random.hpp>
#include <wavestack/solve/ridge_loo.hpp>
#include <wavestack/solve/ridge_solver.hpp>

#include "test_support.hpp"

using namespace wavestack;

namespace loo_test {

/// Leave-one-out by its definition: N refits, each without one row, through
/// the ridge solver's SVD-checked paths. Leaving a row out of
/// |Phi b - y|^2 + N lambda |b|^2 keeps the penalty N lambda, which in the
/// solver's (1/(N-1)) scaling is lambda' = lambda N / (N - 1).
LeaveOneOutError byRefitting(const Matrix& phi, const Matrix& y, double lambda)
{
    const Index n = phi.rows();
    Matrix residuals(n, y.cols());
    RidgeSolver<> solver;
    for (Index i = 0; i < n; ++i) {
        Matrix phiOut(n - 1, phi.cols()), yOut(n - 1, y.cols());
        phiOut << phi.topRows(i), phi.bottomRows(n - 1 - i);
        yOut << y.topRows(i), y.bottomRows(n - 1 - i);
        Matrix b;
        solver.solve(phiOut, yOut, lambda * double(n) / double(n - 1), b);
        residuals.row(i) = y.row(i) - phi.row(i) * b;
    }
    LeaveOneOutError error;
    for (Index c = 0; c < y.cols(); ++c) {
        const double deviation = std::sqrt((y.col(c).array() - y.col(c).mean()).square().mean());
        const Eigen::ArrayXd squares = residuals.col(c).array().square();
        const double mse = squares.mean();
        const double spread = std::sqrt((squares - mse).square().sum() / double(n - 1));
        error.relativeRmse += std::sqrt(mse) / deviation / double(y.cols());
        error.standardError += spread / std::sqrt(double(n)) / (2.0 * std::sqrt(mse)) / deviation / double(y.cols());
    }
    return error;
}

}  // namespace loo_test

TEST_CASE("leave-one-out errors equal N refits without one row each (Allen 1974), for every lambda "
          "of a grid")
{
    Random random(21);
    const Matrix phi = testing::randomNormal(60, 12, 1.0, random);
    const Matrix y = phi * testing::randomNormal(12, 2, 1.0, random) + testing::randomNormal(60, 2, 0.3, random);
    const std::vector<double> lambdas{1e-8, 1e-3, 0.1, 1.0};
    RidgeLeaveOneOut loo;
    const std::vector<LeaveOneOutError> errors = loo.errors(phi, y, lambdas);
    REQUIRE(errors.size() == lambdas.size());
    for (std::size_t i = 0; i < lambdas.size(); ++i) {
        const LeaveOneOutError reference = loo_test::byRefitting(phi, y, lambdas[i]);
        CHECK(errors[i].relativeRmse == doctest::Approx(reference.relativeRmse).epsilon(1e-9));
        CHECK(errors[i].standardError == doctest::Approx(reference.standardError).epsilon(1e-9));
    }
    // Heavy regularisation predicts about the mean: error near 1 standard deviation.
    CHECK(loo.errors(phi, y, {1e6}).front().relativeRmse == doctest::Approx(1.0).epsilon(0.05));
}

TEST_CASE("an interpolating fit has no measurable leave-one-out error; bad shapes are refused")
{
    Random random(23);
    const Matrix phi = testing::randomNormal(5, 8, 1.0, random);  // more features than rows
    const Matrix y = testing::randomNormal(5, 1, 1.0, random);
    RidgeLeaveOneOut loo;
    const auto errors = loo.errors(phi, y, {0.0, 1e-2});
    CHECK(std::isinf(errors[0].relativeRmse));
    CHECK(std::isfinite(errors[1].relativeRmse));
    CHECK_THROWS_AS(loo.errors(phi, testing::randomNormal(4, 1, 1.0, random), {1e-2}), InvalidInput);
    CHECK_THROWS_AS(loo.errors(phi.topRows(1), y.topRows(1), {1e-2}), InvalidInput);
}

TEST_CASE("lambdas far below the Gram matrix's resolution still equal N refits")
{
    // Columns scaled over 10 decades, then mixed by a random rotation: Phi's
    // condition number is about 1e10, its Gram matrix's 1e20, beyond double
    // precision. Lambda 1e-18 is below the Gram matrix's rounding (an
    // eigendecomposition of it scored that lambda +inf); the leave-one-out
    // errors from the features' singular values must still match refitting
    // row by row (the refits go through the solver's QR path, which never
    // forms the Gram matrix).
    Random random(24);
    Matrix phi = testing::randomNormal(40, 10, 1.0, random);
    for (Index j = 0; j < phi.cols(); ++j)
        phi.col(j) *= std::pow(10.0, -double(j));
    phi = phi * Matrix(Eigen::HouseholderQR<Matrix>(testing::randomNormal(10, 10, 1.0, random)).householderQ());
    const Matrix y = phi * testing::randomNormal(10, 1, 1.0, random) + testing::randomNormal(40, 1, 1e-9, random);
    RidgeLeaveOneOut loo;
    const std::vector<double> lambdas{1e-18, 1e-12};
    const auto errors = loo.errors(phi, y, lambdas);
    for (std::size_t i = 0; i < lambdas.size(); ++i)
        CHECK(errors[i].relativeRmse ==
              doctest::Approx(loo_test::byRefitting(phi, y, lambdas[i]).relativeRmse).epsilon(1e-6));
    // The weak lambda resolves the small columns and fits the 1e-9 noise level.
    CHECK(errors[0].relativeRmse < 0.1 * errors[1].relativeRmse);
}
