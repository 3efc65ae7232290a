#pragma once
/// \file
/// An additive kernel term: a weighted sum of Gaussian bumps centred on
/// training points, in the user's units,
///
///     t(x) = sum_j a_j exp(-|G (x - c_j)|^2 / 2),   G = diag(g),
///
/// the form of a kernel ridge regression solution with an anisotropic
/// Gaussian (ARD) kernel (Rasmussen & Williams, Gaussian Processes for
/// Machine Learning, 2006, ch. 2 and 5). A network may carry one; its layers
/// then model what the term leaves (see Network). The Gaussian kernel is the
/// one whose Fourier transform random Fourier features sample (Rahimi &
/// Recht 2007): the term is the limit those features converge to, slowly.
///
/// Evaluation is always in double: with weights of 1e8 and more (kernel
/// ridge at tiny lambdas) float's rounding would swamp the sum.

#include <algorithm>
#include <cmath>
#include <string>

#include <xsimd/xsimd.hpp>

#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"

namespace wavestack {

struct KernelTerm {
    Vector widths;   ///< g (d): inverse length scale per input, in the inputs' units
    Matrix centres;  ///< J x d, in the inputs' units
    Matrix weights;  ///< J x m, in the outputs' units

    bool empty() const { return centres.rows() == 0; }
    Index centreCount() const { return centres.rows(); }

    /// Throws InvalidInput unless the term fits d inputs and m outputs and holds finite values.
    void check(Index d, Index m, const std::string& where) const
    {
        if (empty())
            return;
        if (widths.size() != d || centres.cols() != d || weights.rows() != centres.rows() || weights.cols() != m)
            throw InvalidInput(where + ": the kernel term has " + std::to_string(widths.size()) + " widths, " +
                               std::to_string(centres.rows()) + " x " + std::to_string(centres.cols()) +
                               " centres and " + std::to_string(weights.rows()) + " x " +
                               std::to_string(weights.cols()) + " weights; expected " + std::to_string(d) +
                               " inputs and " + std::to_string(m) + " outputs");
        if (!widths.allFinite() || !centres.allFinite() || !weights.allFinite())
            throw InvalidInput(where + ": the kernel term holds a value that is not finite");
    }
};

namespace detail {

/// The term laid out for evaluation: centres multiplied by the widths, so
/// |G (x - c_j)|^2 = |G x - G c_j|^2, stored column by column.
class KernelTermEvaluator {
public:
    KernelTermEvaluator() = default;
    explicit KernelTermEvaluator(const KernelTerm& term)
        : m_widths(term.widths), m_centres(term.centres * term.widths.asDiagonal()), m_weights(term.weights)
    {
        m_centreNorms = m_centres.rowwise().squaredNorm();
    }

    bool empty() const { return m_centres.rows() == 0; }

    /// y[o] += t_o(x) for one point; no allocation.
    void addPoint(const double* x, double* y) const noexcept
    {
        constexpr Index chunk = 128;
        alignas(64) double bumps[chunk];
        const Index d = m_centres.cols(), count = m_centres.rows(), m = m_weights.cols();
        for (Index j0 = 0; j0 < count; j0 += chunk) {
            const Index n = std::min(chunk, count - j0);
            std::fill(bumps, bumps + n, 0.0);
            for (Index k = 0; k < d; ++k) {
                const double t = m_widths[k] * x[k];
                const double* c = &m_centres(j0, k);
                for (Index j = 0; j < n; ++j) {
                    const double difference = t - c[j];
                    bumps[j] += difference * difference;
                }
            }
            expOfMinusHalf(bumps, n);
            for (Index o = 0; o < m; ++o) {
                const double* a = &m_weights(j0, o);
                double sum = 0.0;
                for (Index j = 0; j < n; ++j)
                    sum += a[j] * bumps[j];
                y[o] += sum;
            }
        }
    }

    /// out += t(x) for a block of points (rows of x); `scratch` is resized as needed.
    void addBatch(const MatrixView& x, Eigen::Ref<Matrix> out, Matrix& scratch) const
    {
        const Index n = x.rows();
        if (empty() || n == 0)
            return;
        // |t - c|^2 = |t|^2 + |c|^2 - 2 t . c: one matrix product. In double
        // the cancellation costs about 1e-16 |t|^2, far below what the
        // exponential resolves at the distances where a bump matters.
        const Matrix t = x * m_widths.asDiagonal();
        scratch.resize(n, m_centres.rows());
        scratch.noalias() = -2.0 * t * m_centres.transpose();
        scratch.colwise() += t.rowwise().squaredNorm();
        scratch.rowwise() += m_centreNorms.transpose();
        for (Index j = 0; j < scratch.cols(); ++j)
            expOfMinusHalf(&scratch(0, j), n);
        out.noalias() += scratch * m_weights;
    }

    /// y += t(x) and jacobian (m x d) += d t / d x for one point.
    void addWithJacobian(const Vector& x, Vector& y, Matrix& jacobian) const
    {
        if (empty())
            return;
        const Vector t = m_widths.cwiseProduct(x);
        // difference(j, k) = g_k x_k - g_k c_jk
        const Matrix difference = (-m_centres).rowwise() + t.transpose();
        Vector bumps = difference.rowwise().squaredNorm();
        expOfMinusHalf(bumps.data(), bumps.size());
        y.noalias() += m_weights.transpose() * bumps;
        // d bump_j / d x_k = -bump_j * difference(j, k) * g_k
        jacobian.noalias() -= (m_weights.transpose() * bumps.asDiagonal() * difference) * m_widths.asDiagonal();
    }

private:
    /// v[i] = exp(-v[i] / 2); clamped so that far points give exactly 0.
    static void expOfMinusHalf(double* v, Index count) noexcept
    {
        using Batch = xsimd::batch<double>;
        constexpr Index lanes = Index(Batch::size);
        const Index vectorEnd = count - count % lanes;
        const Batch half(-0.5), floor(-745.0), zero(0.0);
        for (Index i = 0; i < vectorEnd; i += lanes) {
            const Batch exponent = xsimd::max(half * xsimd::max(Batch::load_unaligned(v + i), zero), floor);
            xsimd::exp(exponent).store_unaligned(v + i);
        }
        for (Index i = vectorEnd; i < count; ++i)
            v[i] = std::exp(std::max(-0.5 * std::max(v[i], 0.0), -745.0));
    }

    Vector m_widths;
    Matrix m_centres;  // J x d, times the widths
    Vector m_centreNorms;
    Matrix m_weights;
};

}  // namespace detail
}  // namespace wavestack
