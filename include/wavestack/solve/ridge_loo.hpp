#pragma once
/// \file
/// Leave-one-out errors of ridge solutions for a whole grid of lambdas, from
/// one decomposition: of the feature matrix (exact down to tiny lambdas) or
/// of its Gram matrix (faster on tall feature matrices).
///
/// For the ridge problem of solve/ridge_solver.hpp, (1/N)|Phi B - Y|^2 +
/// lambda |B|^2, the fitted values are H Y with the hat matrix
/// H = Phi (Phi^T Phi + N lambda I)^-1 Phi^T, and the residual of row i when
/// row i is left out of the fit is (y_i - (H Y)_i) / (1 - H_ii) (Allen 1974,
/// "The relationship between variable selection and data augmentation";
/// Golub, Heath & Wahba 1979 for ridge regression). With the thin
/// decomposition Phi = U S W^T and e_k = s_k^2 / N, H = U diag(e / (e +
/// lambda)) U^T; with the Gram matrix Phi^T Phi / N = V diag(e) V^T and
/// B = Phi V / sqrt(N), H = B diag(1 / (e + lambda)) B^T. Either way every
/// lambda after the first costs O(N P) instead of a new factorisation.
///
/// Why two paths: Phi^T Phi squares the condition number, so its eigenvalues
/// below about 1e-16 of the largest are rounding noise and lambdas below
/// about 1e-14 cannot be scored through it. Smooth targets want them: on the
/// suite's data at N = 1 000, choosing the per-input spreads with lambdas
/// down to 1e-20 lowered the 4-seed test error of OTL circuit from 2.0e-4 to
/// 1.2e-4 and of Friedman #1 from 1.25e-5 to 1.0e-6 (DEVELOPERS.md,
/// "Defaults"). The decomposition of Phi costs about the same as the Gram
/// path at 800 x 401 but 2x more at 4 000 x 513, where autoFit's search
/// took 48 s instead of 23 s (borehole, N = 10 000), so tall trials keep the
/// Gram path.
///
/// Why it is used: it scores a setting on every row instead of on a 20 %
/// held-out split, which at N = 1 000 is 200 rows and too noisy to choose
/// per-input frequency spreads (DEVELOPERS.md, "Defaults").

#include <cmath>
#include <limits>
#include <string>
#include <vector>

#include <Eigen/Eigenvalues>
#include <Eigen/SVD>

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

/// Adds one output's left-out residuals (`squares`: their squares, one per
/// row) to `error`, averaged over `outputs` outputs, in units of the
/// output's standard deviation `deviation`.
inline void addLeaveOneOutOutput(const Vector& squares, double deviation, Index outputs, LeaveOneOutError& error)
{
    const Index points = squares.size();
    const double mse = squares.mean();
    const double spread = std::sqrt((squares.array() - mse).square().sum() / double(points - 1));
    const double rms = std::sqrt(mse);
    const double unit = deviation > 0.0 ? deviation : 1.0;
    error.relativeRmse += rms / unit / double(outputs);
    if (rms > 0.0)
        error.standardError += spread / std::sqrt(double(points)) / (2.0 * rms) / unit / double(outputs);
}

/// The first entry with the lowest relativeRmse.
inline std::size_t lowestError(const std::vector<LeaveOneOutError>& errors)
{
    std::size_t best = 0;
    for (std::size_t i = 1; i < errors.size(); ++i)
        if (errors[i].relativeRmse < errors[best].relativeRmse)
            best = i;
    return best;
}

/// One-standard-error rule (Hastie, Tibshirani & Friedman, The Elements of
/// Statistical Learning, 2009, sec. 7.10): the index of the strongest lambda
/// whose error is within one standard error of the lowest.
inline std::size_t oneStandardErrorChoice(const std::vector<LeaveOneOutError>& errors,
                                          const std::vector<double>& lambdas)
{
    const std::size_t best = lowestError(errors);
    std::size_t chosen = best;
    for (std::size_t i = 0; i < errors.size(); ++i)
        if (lambdas[i] > lambdas[chosen] &&
            errors[i].relativeRmse <= errors[best].relativeRmse + errors[best].standardError)
            chosen = i;
    return chosen;
}

/// Which matrix RidgeLeaveOneOut decomposes: the features (lambdas down to
/// about 1e-30 of the largest eigenvalue) or their Gram matrix (down to
/// about 1e-14; faster when N >> P).
enum class LeaveOneOutPath { features, gram };

/// Keeps its decomposition and product buffers between calls. One thread:
/// callers that score many settings run one object per thread.
class RidgeLeaveOneOut {
public:
    /// Leave-one-out errors per lambda. Features N x P, targets N x m
    /// (N >= 2). +inf for a lambda whose hat matrix has a diagonal entry at 1
    /// to working precision (the fit interpolates a row, so leaving it out is
    /// not measurable).
    std::vector<LeaveOneOutError> errors(const MatrixView& features, const MatrixView& targets,
                                         const std::vector<double>& lambdas,
                                         LeaveOneOutPath path = LeaveOneOutPath::features)
    {
        const Index points = features.rows();
        if (targets.rows() != points || points < 2 || features.cols() == 0)
            throw InvalidInput("RidgeLeaveOneOut: need at least 2 rows and matching features (" +
                               std::to_string(points) + " x " + std::to_string(features.cols()) + ") and targets (" +
                               std::to_string(targets.rows()) + " rows)");
        if (!features.allFinite())
            throw NumericalError("RidgeLeaveOneOut: the features are not all finite");
        // Both paths give H = B diag(g) B^T with g_k = n_k / (e_k + lambda).
        Vector values, numerators;
        if (path == LeaveOneOutPath::features) {
            m_svd.compute(features, Eigen::ComputeThinU);
            if (m_svd.info() != Eigen::Success)
                throw NumericalError(
                    "RidgeLeaveOneOut: the singular value decomposition of the features did not converge");
            values = m_svd.singularValues().array().square().matrix() / double(points);
            numerators = values;
            m_basis = m_svd.matrixU();
            m_coefficients.noalias() = m_basis.transpose() * targets;  // U^T Y
        } else {
            const double scale = 1.0 / double(points);
            m_assembler.assemble(features, targets, scale, m_gram, m_rhs);
            m_eigen.compute(m_gram, Eigen::ComputeEigenvectors);  // reads the lower triangle
            if (m_eigen.info() != Eigen::Success)
                throw NumericalError("RidgeLeaveOneOut: the eigendecomposition of the Gram matrix did not converge");
            values = m_eigen.eigenvalues().cwiseMax(0.0);  // rounding can leave tiny negatives
            numerators = Vector::Ones(values.size());
            m_basis.noalias() = std::sqrt(scale) * (features * m_eigen.eigenvectors());  // Phi V / sqrt(N)
            m_coefficients.noalias() = m_eigen.eigenvectors().transpose() * m_rhs / std::sqrt(scale);
        }
        m_squares = m_basis.array().square();

        Vector deviation(targets.cols());
        for (Index c = 0; c < targets.cols(); ++c) {
            const double mean = targets.col(c).mean();
            deviation[c] = std::sqrt((targets.col(c).array() - mean).square().sum() / double(points));
        }

        std::vector<LeaveOneOutError> result;
        for (double lambda : lambdas) {
            const Vector weight = (numerators.array() / (values.array() + lambda)).matrix();  // g_k
            const Vector leverage = m_squares * weight;                                       // H_ii
            const Matrix fitted = m_basis * (weight.asDiagonal() * m_coefficients);
            LeaveOneOutError error;
            const bool measurable = (leverage.array() < 1.0 - 1e-10).all() && std::isfinite(leverage.sum());
            for (Index c = 0; measurable && c < targets.cols(); ++c)
                addLeaveOneOutOutput(
                    ((targets.col(c) - fitted.col(c)).array() / (1.0 - leverage.array())).square().matrix(),
                    deviation[c], targets.cols(), error);
            if (!measurable || !std::isfinite(error.relativeRmse) || !std::isfinite(error.standardError))
                error = {std::numeric_limits<double>::infinity(), 0.0};
            result.push_back(error);
        }
        return result;
    }

private:
    GramAssembler<SerialReduction> m_assembler;
    Matrix m_gram, m_rhs, m_basis, m_coefficients, m_squares;
    Eigen::SelfAdjointEigenSolver<Matrix> m_eigen;
    Eigen::BDCSVD<Matrix> m_svd;
};

}  // namespace wavestack
