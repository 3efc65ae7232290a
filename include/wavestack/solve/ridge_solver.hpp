#pragma once
/// \file
/// Ridge (Tikhonov-regularised least squares) layer solver.
///
/// Solver contract: `solve(Phi, R, lambda, B)` writes the amplitudes B that
/// minimise (1/N) |Phi B - R|_F^2 + lambda |B|_F^2 for an N x P feature
/// matrix Phi and N x m targets R. All m outputs share one factorisation.

#include <cmath>
#include <string>
#include <utility>
#include <vector>

#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/core/validate.hpp"
#include "wavestack/parallel/reduction.hpp"
#include "wavestack/solve/gram.hpp"

namespace wavestack {

/// Which factorisation a ridge solve used.
enum class SolvePath { cholesky, qr };

/// Tuning of RidgeSolver's choice between its two paths.
struct RidgeSettings {
    /// QR is used when P > qrWidthFraction * N ("P not small against N"):
    /// there the Gram matrix costs as much as QR and squares a condition
    /// number that P close to N makes large.
    double qrWidthFraction = 0.5;
    /// QR is used when Cholesky's reciprocal condition estimate of the
    /// regularised Gram matrix falls below this. Cholesky's relative error in
    /// the amplitudes grows like eps / rcond, so 1e-8 keeps it near 1e-8. The
    /// fitted values Phi b stay accurate far longer (the error lies along the
    /// Gram matrix's smallest eigenvectors, which Phi maps to small values),
    /// so training, which needs fitted values and solves thousands of times,
    /// uses 1e-12 (fastTraining()): QR costs about 10x more at N >> P.
    double minReciprocalCondition = 1e-8;

    static RidgeSettings fastTraining()
    {
        RidgeSettings settings;
        settings.minReciprocalCondition = 1e-12;
        return settings;
    }
};

/// Gram matrix + Cholesky when P is small against N and the regularised Gram
/// matrix is well conditioned; column-pivoted Householder QR of the stacked
/// system [Phi / sqrt(N); sqrt(lambda) I] otherwise. QR works on Phi itself,
/// so its error grows with cond(Phi) instead of cond(Phi)^2.
///
/// The normal equations are assembled by GramAssembler (solve/gram.hpp):
/// one triangle, rows cut into fixed blocks, the same bits for every worker
/// count.
///
/// The object keeps its Gram, partial and factor buffers between calls, so a
/// sampler that re-solves thousands of times with the same shape allocates once.
template <class Reduction = SerialReduction>
class RidgeSolver {
public:
    explicit RidgeSolver(const RidgeSettings& settings = RidgeSettings(), Reduction reduction = Reduction())
        : m_settings(settings), m_assembler(std::move(reduction))
    {
    }

    void solve(const MatrixView& features, const MatrixView& targets, double lambda, Matrix& amplitudes)
    {
        const Index points = features.rows();
        const Index width = features.cols();
        if (targets.rows() != points)
            throw InvalidInput("RidgeSolver: features have " + std::to_string(points) + " rows but targets have " +
                               std::to_string(targets.rows()));
        if (points == 0 || width == 0)
            throw InvalidInput("RidgeSolver: empty feature matrix (" + std::to_string(points) + " x " +
                               std::to_string(width) + ")");
        detail::requireNonNegative(lambda, "RidgeSolver: lambda");

        const double scale = 1.0 / static_cast<double>(points);
        if (static_cast<double>(width) <= m_settings.qrWidthFraction * static_cast<double>(points)) {
            m_assembler.assemble(features, targets, scale, m_gram, amplitudes);
            m_gram.diagonal().array() += lambda;
            m_cholesky.compute(m_gram);
            if (m_cholesky.info() == Eigen::Success && m_cholesky.rcond() >= m_settings.minReciprocalCondition) {
                m_cholesky.solveInPlace(amplitudes);
                m_lastPath = SolvePath::cholesky;
                requireFiniteResult(amplitudes);
                return;
            }
        }
        solveByQr(features, targets, lambda, amplitudes);
    }

    SolvePath lastPath() const { return m_lastPath; }
    const RidgeSettings& settings() const { return m_settings; }
    const Reduction& reduction() const { return m_assembler.reduction(); }

private:
    void solveByQr(const MatrixView& features, const MatrixView& targets, double lambda, Matrix& amplitudes)
    {
        const Index points = features.rows();
        const Index width = features.cols();
        const double rowScale = 1.0 / std::sqrt(static_cast<double>(points));
        const Index extra = lambda > 0.0 ? width : 0;
        Matrix stacked(points + extra, width);
        Matrix rhs = Matrix::Zero(points + extra, targets.cols());
        stacked.topRows(points) = rowScale * features;
        rhs.topRows(points) = rowScale * targets;
        if (extra > 0)
            stacked.bottomRows(extra) = std::sqrt(lambda) * Matrix::Identity(width, width);
        if (extra > 0) {
            // sqrt(lambda) I makes the stacked matrix full rank: blocked Householder QR.
            amplitudes = Eigen::HouseholderQR<Matrix>(stacked).solve(rhs);
        } else {
            // lambda = 0 may leave Phi rank-deficient: column pivoting finds a basic solution.
            amplitudes = Eigen::ColPivHouseholderQR<Matrix>(stacked).solve(rhs);
        }
        m_lastPath = SolvePath::qr;
        requireFiniteResult(amplitudes);
    }

    static void requireFiniteResult(const Matrix& amplitudes)
    {
        if (!amplitudes.allFinite())
            throw NumericalError("RidgeSolver: the amplitudes are not finite; the features or targets overflow");
    }

    RidgeSettings m_settings;
    GramAssembler<Reduction> m_assembler;
    Matrix m_gram;
    Eigen::LLT<Matrix, Eigen::Lower> m_cholesky;
    SolvePath m_lastPath = SolvePath::cholesky;
};

}  // namespace wavestack
