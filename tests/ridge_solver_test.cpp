// Tests of the ridge layer solver (solve/ridge_solver.hpp).
#include <doctest/doctest.h>

#include <cmath>

#include <wavestack/core/error.hpp>
#include <wavestack/core/random.hpp>
#include <wavestack/solve/ridge_solver.hpp>

#include "test_support.hpp"

using namespace wavestack;

namespace {

Matrix randomMatrix(Index rows, Index cols, Random& random) { return testing::randomNormal(rows, cols, 1.0, random); }

/// Features with prescribed singular values: Q1 diag(s) Q2^T with random orthogonal factors.
Matrix withSingularValues(Index rows, const Vector& singular, Random& random)
{
    const Index cols = singular.size();
    const Matrix left = Eigen::HouseholderQR<Matrix>(randomMatrix(rows, cols, random)).householderQ() *
                        Matrix::Identity(rows, cols);
    const Matrix right = Eigen::HouseholderQR<Matrix>(randomMatrix(cols, cols, random)).householderQ();
    return left * singular.asDiagonal() * right.transpose();
}

/// Reference solution of min (1/N)|Phi b - r|^2 + lambda |b|^2 through Eigen's
/// SVD (a general-purpose library, independent of the solver's Cholesky and
/// QR paths): b = V diag(s / (s^2 + N lambda)) U^T r.
Matrix svdReference(const Matrix& phi, const Matrix& r, double lambda)
{
    Eigen::BDCSVD<Matrix> svd(phi, Eigen::ComputeThinU | Eigen::ComputeThinV);
    const Vector s = svd.singularValues();
    const double n = static_cast<double>(phi.rows());
    const Vector filter = s.array() / (s.array().square() + n * lambda);
    return svd.matrixV() * filter.asDiagonal() * svd.matrixU().transpose() * r;
}

double relativeDifference(const Matrix& a, const Matrix& b) { return (a - b).norm() / b.norm(); }

}  // namespace

TEST_CASE("ridge solutions match Eigen's SVD on well-conditioned problems (Cholesky path)")
{
    Random random(11);
    for (int trial = 0; trial < 5; ++trial) {
        const Matrix phi = randomMatrix(400, 40, random);
        const Matrix r = randomMatrix(400, 3, random);
        RidgeSolver<> solver;
        Matrix b;
        for (double lambda : {0.0, 1e-8, 1e-3, 1.0}) {
            solver.solve(phi, r, lambda, b);
            CHECK(solver.lastPath() == SolvePath::cholesky);
            CHECK(relativeDifference(b, svdReference(phi, r, lambda)) < 1e-9);
        }
    }
}

TEST_CASE("ridge solutions match Eigen's SVD on ill-conditioned problems (QR path)")
{
    Random random(12);
    for (int trial = 0; trial < 5; ++trial) {
        // Singular values from 1 down to 1e-7: cond(Phi^T Phi) = 1e14, far past Cholesky.
        const Vector singular = Eigen::VectorXd::LinSpaced(30, 0.0, -7.0).unaryExpr([](double e) {
            return std::pow(10.0, e);
        });
        const Matrix phi = withSingularValues(300, singular, random);
        const Matrix r = randomMatrix(300, 2, random);
        RidgeSolver<> solver;
        Matrix b;
        for (double lambda : {1e-16, 1e-13}) {
            solver.solve(phi, r, lambda, b);
            CHECK(solver.lastPath() == SolvePath::qr);
            CHECK(relativeDifference(b, svdReference(phi, r, lambda)) < 1e-9);
        }
    }
}

TEST_CASE("the training setting keeps fitted values accurate where amplitudes are not")
{
    // cond(Phi^T Phi / N + lambda) about 3e10: past the default threshold
    // (QR) but not past fastTraining()'s (Cholesky). The amplitudes then
    // differ from the SVD solution by about 1e-6, the fitted values by far less.
    Random random(17);
    const Vector singular = Eigen::VectorXd::LinSpaced(30, 0.0, -7.0).unaryExpr([](double e) {
        return std::pow(10.0, e);
    });
    const Matrix phi = withSingularValues(300, singular, random);
    const Matrix r = randomMatrix(300, 2, random);
    RidgeSolver<> solver(RidgeSettings::fastTraining());
    Matrix b;
    solver.solve(phi, r, 1e-13, b);
    CHECK(solver.lastPath() == SolvePath::cholesky);
    const Matrix reference = svdReference(phi, r, 1e-13);
    MESSAGE("amplitudes differ by " << relativeDifference(b, reference) << ", fitted values by "
                                    << relativeDifference(phi * b, phi * reference));
    CHECK(relativeDifference(phi * b, phi * reference) < 1e-6);
}

TEST_CASE("QR is used when the width is not small against the number of points")
{
    Random random(13);
    const Matrix phi = randomMatrix(100, 60, random);  // 60 > 0.5 * 100
    const Matrix r = randomMatrix(100, 1, random);
    RidgeSolver<> solver;
    Matrix b;
    solver.solve(phi, r, 1e-6, b);
    CHECK(solver.lastPath() == SolvePath::qr);
    CHECK(relativeDifference(b, svdReference(phi, r, 1e-6)) < 1e-9);
}

TEST_CASE("a singular Gram matrix falls back to QR instead of failing")
{
    Random random(14);
    Matrix phi = randomMatrix(200, 10, random);
    phi.col(3) = phi.col(7);  // two identical features
    const Matrix r = randomMatrix(200, 1, random);
    RidgeSolver<> solver;
    Matrix b;
    solver.solve(phi, r, 0.0, b);
    CHECK(solver.lastPath() == SolvePath::qr);
    // Any least-squares solution leaves the residual orthogonal to the features.
    CHECK((phi.transpose() * (phi * b - r)).norm() < 1e-9 * r.norm());
}

TEST_CASE("several outputs share one factorisation and equal separate solves")
{
    Random random(15);
    const Matrix phi = randomMatrix(300, 20, random);
    const Matrix r = randomMatrix(300, 4, random);
    RidgeSolver<> solver;
    Matrix together, alone;
    solver.solve(phi, r, 1e-4, together);
    for (Index j = 0; j < r.cols(); ++j) {
        solver.solve(phi, r.col(j), 1e-4, alone);
        CHECK((together.col(j) - alone).norm() <= 1e-12 * alone.norm());
    }
}

TEST_CASE("bad arguments are rejected with a clear error")
{
    Random random(16);
    const Matrix phi = randomMatrix(50, 5, random);
    const Matrix r = randomMatrix(50, 1, random);
    RidgeSolver<> solver;
    Matrix b;
    CHECK_THROWS_WITH_AS(solver.solve(phi, r, -1.0, b), doctest::Contains("lambda"), InvalidInput);
    CHECK_THROWS_WITH_AS(solver.solve(phi, r.topRows(49), 0.0, b), doctest::Contains("49"), InvalidInput);
    CHECK_THROWS_AS(solver.solve(Matrix(0, 5), Matrix(0, 1), 0.0, b), InvalidInput);
}
