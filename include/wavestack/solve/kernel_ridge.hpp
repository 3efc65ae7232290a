#pragma once
/// \file
/// Kernel ridge regression with the isotropic Gaussian kernel
/// k(u, v) = exp(-sigma^2 |u - v|^2 / 2), every training row a centre:
/// weights a = (K + lambda I)^-1 Y, and the leave-one-out error of every
/// lambda of a grid from one eigendecomposition K = Q diag(e) Q^T.
///
/// The left-out residual of row i is a_i / [(K + lambda I)^-1]_ii (Allen
/// 1974; Rasmussen & Williams, Gaussian Processes for Machine Learning,
/// 2006, eq. 5.12), here [Q diag(1/(e + lambda)) Q^T Y]_i over
/// [Q^2 (1/(e + lambda))]_i, which stays exact where K is singular to
/// working precision (smooth targets choose lambdas of 1e-14 and below).
/// sigma is the spread of the Gaussian frequencies random Fourier features
/// would sample for the same kernel (Rahimi & Recht 2007), so a spread chosen
/// for Fourier features is a starting point for the kernel's.
///
/// Cost: the n x n kernel matrix and its eigendecomposition, O(n^3) (about
/// 0.1-0.3 s at n = 1 000 on one core); meant for n up to a few thousand.

#include <cmath>
#include <limits>
#include <string>
#include <vector>

#include <Eigen/Eigenvalues>

#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/solve/ridge_loo.hpp"

namespace wavestack {

/// Gaussian kernel matrix between the rows of a (n x d) and b (p x d).
inline Matrix gaussianKernel(const MatrixView& a, const MatrixView& b, double sigma)
{
    Matrix k = -2.0 * a * b.transpose();
    k.colwise() += a.rowwise().squaredNorm();
    k.rowwise() += b.rowwise().squaredNorm().transpose();
    const double scale = -0.5 * sigma * sigma;
    return (k.array().max(0.0) * scale).exp().matrix();
}

/// A lambda is not chosen where the kernel's rounding, amplified by the
/// weights, reaches this share of its leave-one-out error (see kernelRidge).
/// Measured (N = 1 000, seed 7): piston at lambda 1e-18 (weights up to
/// 1.6e12) held out 0.2 against a leave-one-out 5e-3, Friedman #1 at 1e-16
/// (8e11) 7.4e-3 against 6e-5; OTL circuit (8e9), Ishigami (2e9) and wing
/// weight (1.8e10) at 1e-14 held out within 1.6x of their leave-one-out.
constexpr double roundingShare = 0.25;

/// One kernel ridge solution and how it was chosen.
struct KernelRidgeSolution {
    Matrix weights;  ///< n x m
    double lambda = 0.0;
    LeaveOneOutError error{std::numeric_limits<double>::infinity(), 0.0};
};

/// Kernel ridge regression on rows u (n x d) and targets y (n x m) with
/// width sigma: the lambda of `lambdas` with the lowest leave-one-out
/// relative RMSE, then the strongest within one standard error of it (as
/// autoFit's trials do), and its weights. Throws NumericalError when the
/// eigendecomposition fails.
inline KernelRidgeSolution kernelRidge(const MatrixView& u, const MatrixView& y, double sigma,
                                       const std::vector<double>& lambdas)
{
    const Index n = u.rows();
    if (y.rows() != n || n < 2 || lambdas.empty() || !(sigma > 0.0))
        throw InvalidInput("kernelRidge: need at least 2 rows, as many targets as rows (" + std::to_string(n) +
                           " and " + std::to_string(y.rows()) + "), a lambda and a positive width");
    const Matrix kernel = gaussianKernel(u, u, sigma);
    Eigen::SelfAdjointEigenSolver<Matrix> eigen(kernel);
    if (eigen.info() != Eigen::Success)
        throw NumericalError("kernelRidge: the eigendecomposition of the kernel matrix did not converge");
    const Vector values = eigen.eigenvalues().cwiseMax(0.0);  // rounding leaves tiny negatives
    const Matrix& q = eigen.eigenvectors();
    const Matrix squares = q.array().square().matrix();
    const Matrix coefficients = q.transpose() * y;

    Vector deviation(y.cols());
    for (Index c = 0; c < y.cols(); ++c)
        deviation[c] = std::sqrt((y.col(c).array() - y.col(c).mean()).square().mean());

    std::vector<LeaveOneOutError> errors;
    for (double lambda : lambdas) {
        const Vector inverse = (values.array() + lambda).inverse().matrix();
        const Vector diagonal = squares * inverse;  // [(K + lambda I)^-1]_ii
        const Matrix weights = q * (inverse.asDiagonal() * coefficients);
        LeaveOneOutError error;
        for (Index c = 0; c < y.cols(); ++c)
            addLeaveOneOutOutput((weights.col(c).array() / diagonal.array()).square().matrix(), deviation[c],
                                 y.cols(), error);
        // The errors above are exact for the decomposed matrix Q diag(e) Q^T,
        // which differs from K by rounding; predictions use K. Large weights
        // amplify that difference: the residual (K + lambda I) a - Y, zero
        // for the decomposed matrix, measures it.
        const Matrix mismatch = kernel * weights + lambda * weights - y;
        double rounding = 0.0;  // averaged over outputs like relativeRmse
        for (Index c = 0; c < y.cols(); ++c) {
            const double unit = deviation[c] > 0.0 ? deviation[c] : 1.0;
            rounding += std::sqrt(mismatch.col(c).squaredNorm() / double(n)) / unit / double(y.cols());
        }
        if (!std::isfinite(error.relativeRmse) || !std::isfinite(error.standardError) ||
            !(rounding <= roundingShare * error.relativeRmse))
            error = {std::numeric_limits<double>::infinity(), 0.0};
        errors.push_back(error);
    }
    // Smaller weights at the same accuracy (the one-standard-error rule).
    const std::size_t chosen = oneStandardErrorChoice(errors, lambdas);
    KernelRidgeSolution solution;
    solution.error = errors[chosen];
    solution.lambda = lambdas[chosen];
    const Vector inverse = (values.array() + solution.lambda).inverse().matrix();
    solution.weights = q * (inverse.asDiagonal() * coefficients);
    return solution;
}

}  // namespace wavestack
