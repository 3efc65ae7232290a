#pragma once
/// \file
/// Leave-one-out errors of ridge solutions for a whole grid of lambdas, from
/// one eigendecomposition of the Gram matrix.
///
/// For the ridge problem of solve/ridge_solver.hpp, (1/N)|Phi B - Y|^2 +
/// lambda |B|^2, the fitted values are H Y with the hat matrix
/// H = Phi (Phi^T Phi + N lambda I)^-1 Phi^T, and the residual of row i when
/// row i is left out of the fit is (y_i - (H Y)_i) / (1 - H_ii) (Allen 1974,
/// "The relationship between variable selection and data augmentation";
/// Golub, Heath & Wahba 1979 for ridge regression). With
/// Phi^T Phi / N = V diag(e) V^T and Q = Phi V, both H Y and diag(H) are sums
/// over the eigenpairs weighted by 1 / (e_k + lambda), so every lambda after
/// the first costs O(N P) instead of a new factorisation.
///
/// Why it is used: it scores a setting on every row instead of on a 20 %
/// held-out split, which at N = 1 000 is 200 rows and too noisy to choose
/// per-input frequency spreads (DEVELOPERS.md, "Defaults").

#include <algorithm>
#include <cmath>
#include <limits>
#include <string>
#include <utility>
#include <vector>

#include <Eigen/Eigenvalues>

#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/parallel/reduction.hpp"
#include "wavestack/solve/gram.hpp"

namespace wavestack {

/// A leave-one-out error and its standard error.
struct LeaveOneOutError {
    /// RMSE of the left-out residuals over the target's standard deviation, averaged over outputs.
    double relativeRmse = 0.0;
    /// Standard error of relativeRmse from the spread of the squared residuals
    /// (delta method: se(MSE) / (2 RMSE)), for the one-standard-error rule.
    double standardError = 0.0;
};

/// Keeps its Gram, eigen and product buffers between calls.
template <class Reduction = SerialReduction>
class RidgeLeaveOneOut {
public:
    explicit RidgeLeaveOneOut(Reduction reduction = Reduction()) : m_assembler(std::move(reduction)) {}

    /// Leave-one-out errors per lambda. Features N x P, targets N x m
    /// (N >= 2). +inf for a lambda whose hat matrix has a diagonal entry at 1
    /// to working precision (the fit interpolates a row, so leaving it out is
    /// not measurable).
    std::vector<LeaveOneOutError> errors(const MatrixView& features, const MatrixView& targets,
                                         const std::vector<double>& lambdas)
    {
        const Index points = features.rows();
        if (targets.rows() != points || points < 2 || features.cols() == 0)
            throw InvalidInput("RidgeLeaveOneOut: need at least 2 rows and matching features (" +
                               std::to_string(points) + " x " + std::to_string(features.cols()) + ") and targets (" +
                               std::to_string(targets.rows()) + " rows)");
        const double scale = 1.0 / double(points);
        m_assembler.assemble(features, targets, scale, m_gram, m_rhs);
        m_eigen.compute(m_gram, Eigen::ComputeEigenvectors);  // reads the lower triangle
        if (m_eigen.info() != Eigen::Success)
            throw NumericalError("RidgeLeaveOneOut: the eigendecomposition of the Gram matrix did not converge");
        const Vector values = m_eigen.eigenvalues().cwiseMax(0.0);              // rounding can leave tiny negatives
        m_projected.noalias() = features * m_eigen.eigenvectors();              // Q = Phi V
        m_coefficients.noalias() = m_eigen.eigenvectors().transpose() * m_rhs;  // V^T Phi^T Y / N
        m_squares = m_projected.array().square();

        Vector deviation(targets.cols());
        for (Index c = 0; c < targets.cols(); ++c) {
            const double mean = targets.col(c).mean();
            deviation[c] = std::sqrt((targets.col(c).array() - mean).square().sum() / double(points));
        }

        std::vector<LeaveOneOutError> result;
        for (double lambda : lambdas) {
            const Vector weight = (values.array() + lambda).inverse().matrix();  // 1 / (e_k + lambda)
            const Vector leverage = scale * (m_squares * weight);                // H_ii
            const Matrix fitted = m_projected * (weight.asDiagonal() * m_coefficients);
            LeaveOneOutError error;
            const bool measurable = (leverage.array() < 1.0 - 1e-10).all() && std::isfinite(leverage.sum());
            for (Index c = 0; measurable && c < targets.cols(); ++c) {
                const Vector squares =
                    ((targets.col(c) - fitted.col(c)).array() / (1.0 - leverage.array())).square().matrix();
                const double mse = squares.mean();
                const double spread = std::sqrt((squares.array() - mse).square().sum() / double(points - 1));
                const double rms = std::sqrt(mse);
                const double unit = deviation[c] > 0.0 ? deviation[c] : 1.0;
                error.relativeRmse += rms / unit / double(targets.cols());
                if (rms > 0.0)
                    error.standardError +=
                        spread / std::sqrt(double(points)) / (2.0 * rms) / unit / double(targets.cols());
            }
            if (!measurable || !std::isfinite(error.relativeRmse) || !std::isfinite(error.standardError))
                error = {std::numeric_limits<double>::infinity(), 0.0};
            result.push_back(error);
        }
        return result;
    }

private:
    GramAssembler<Reduction> m_assembler;
    Matrix m_gram, m_rhs, m_projected, m_coefficients, m_squares;
    Eigen::SelfAdjointEigenSolver<Matrix> m_eigen;
};

}  // namespace wavestack
