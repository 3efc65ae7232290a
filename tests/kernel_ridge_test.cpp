// Kernel ridge regression with leave-one-out errors from one
// eigendecomposition (solve/kernel_ridge.hpp).
#include <doctest/doctest.h>

#include <cmath>
#include <limits>
#include <vector>

#include <wavestack/solve/kernel_ridge.hpp>

#include "test_support.hpp"

using namespace wavestack;

namespace {

testing::Sample smooth(Index n, std::uint64_t seed)
{
    return testing::uniformSample(n, 2, seed, [](const auto& u) { return std::sin(2.0 * u[0]) + u[1] * u[1]; });
}

}  // namespace

TEST_CASE("the Gaussian kernel matrix is exp(-sigma^2 |u - v|^2 / 2) entry by entry")
{
    const testing::Sample data = smooth(7, 1);
    const Matrix k = gaussianKernel(data.x, data.x.topRows(4), 1.7);
    REQUIRE(k.rows() == 7);
    REQUIRE(k.cols() == 4);
    for (Index i = 0; i < 7; ++i)
        for (Index j = 0; j < 4; ++j)
            CHECK(k(i, j) ==
                  doctest::Approx(std::exp(-0.5 * 1.7 * 1.7 * (data.x.row(i) - data.x.row(j)).squaredNorm()))
                      .epsilon(1e-14));
}

TEST_CASE("leave-one-out errors equal refitting without each row, and the weights solve (K + lambda I) a = y")
{
    // The identity residual_i = a_i / [(K + lambda I)^-1]_ii (Allen 1974;
    // Rasmussen & Williams 2006, eq. 5.12) against n explicit refits.
    const testing::Sample data = smooth(40, 2);
    const double sigma = 2.0, lambda = 1e-3;
    const KernelRidgeSolution solution = kernelRidge(data.x, data.y, sigma, {lambda});
    const Index n = data.x.rows();
    const Matrix k = gaussianKernel(data.x, data.x, sigma);
    CHECK(((k + lambda * Matrix::Identity(n, n)) * solution.weights - data.y).norm() < 1e-10);

    double squares = 0.0;
    for (Index i = 0; i < n; ++i) {
        std::vector<Index> keep;
        for (Index r = 0; r < n; ++r)
            if (r != i)
                keep.push_back(r);
        const Matrix x = data.x(keep, Eigen::all), y = data.y(keep, Eigen::all);
        const Matrix weights =
            (gaussianKernel(x, x, sigma) + lambda * Matrix::Identity(n - 1, n - 1)).ldlt().solve(y);
        const double predicted = (gaussianKernel(data.x.row(i), x, sigma) * weights)(0, 0);
        squares += std::pow(data.y(i, 0) - predicted, 2);
    }
    const double mean = data.y.mean();
    const double deviation = std::sqrt((data.y.array() - mean).square().mean());
    CHECK(solution.error.relativeRmse == doctest::Approx(std::sqrt(squares / double(n)) / deviation).epsilon(1e-8));
    CHECK(solution.lambda == lambda);
}

TEST_CASE("lambda is the strongest within one standard error of the lowest leave-one-out error")
{
    const testing::Sample data = smooth(200, 3);
    const std::vector<double> grid = {1e-12, 1e-10, 1e-8, 1e-6, 1e-4, 1e-2, 1.0};
    const KernelRidgeSolution chosen = kernelRidge(data.x, data.y, 1.5, grid);
    double lowest = std::numeric_limits<double>::infinity(), standardError = 0.0;
    for (double lambda : grid) {
        const KernelRidgeSolution one = kernelRidge(data.x, data.y, 1.5, {lambda});
        if (one.error.relativeRmse < lowest) {
            lowest = one.error.relativeRmse;
            standardError = one.error.standardError;
        }
    }
    const KernelRidgeSolution atChosen = kernelRidge(data.x, data.y, 1.5, {chosen.lambda});
    CHECK(atChosen.error.relativeRmse <= lowest + standardError);
    for (double lambda : grid)
        if (lambda > chosen.lambda)
            CHECK(kernelRidge(data.x, data.y, 1.5, {lambda}).error.relativeRmse > lowest + standardError);
    // A smooth target without noise: kernel ridge interpolates it closely.
    CHECK(chosen.error.relativeRmse < 1e-3);
}

TEST_CASE("a lambda whose weights amplify the kernel's rounding is never chosen")
{
    // A wide kernel on 300 rows is singular to working precision; at lambda
    // 1e-20 the weights are huge and (K + lambda I) a misses y by far more
    // than the error the decomposition reports, so the lambda is refused.
    const testing::Sample data = smooth(300, 4);
    const KernelRidgeSolution tiny = kernelRidge(data.x, data.y, 0.05, {1e-20});
    CHECK(std::isinf(tiny.error.relativeRmse));
    const KernelRidgeSolution grid = kernelRidge(data.x, data.y, 0.05, {1e-20, 1e-10, 1e-6});
    CHECK(grid.lambda > 1e-20);
    CHECK(std::isfinite(grid.error.relativeRmse));
}

TEST_CASE("bad arguments are refused with the sizes in the message")
{
    const testing::Sample data = smooth(10, 5);
    CHECK_THROWS_WITH_AS(kernelRidge(data.x, data.y.topRows(9), 1.0, {1e-6}), doctest::Contains("10 and 9"),
                         InvalidInput);
    CHECK_THROWS_AS(kernelRidge(data.x, data.y, 0.0, {1e-6}), InvalidInput);
    CHECK_THROWS_AS(kernelRidge(data.x, data.y, 1.0, {}), InvalidInput);
}
