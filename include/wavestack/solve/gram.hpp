#pragma once
/// \file
/// Assembly of the normal equations Phi^T Phi and Phi^T R, the dominant cost
/// of every ridge solve (N x P x (P + 1) flops for the lower triangle).

#include <algorithm>
#include <cstddef>
#include <utility>
#include <vector>

#include "wavestack/core/types.hpp"

// Optional BLAS backend for the rank-k update (build option WAVESTACK_BLAS):
// Eigen's own rank update reaches 49-55 % of the FMA peak on an AVX-512
// machine, OpenBLAS's dsyrk 58-72 % with its AVX-512 kernels. The default
// build needs Eigen alone.
#if defined(WAVESTACK_USE_CBLAS)
#include <cblas.h>
#endif
#include "wavestack/parallel/reduction.hpp"

namespace wavestack {

/// Sums over a fixed cut of the rows (RowBlocks): each block's part is one
/// task of the reduction policy, a symmetric rank-k update that forms one
/// triangle only, and the parts are added in block order, so the result is
/// the same bit for bit for every worker count. Partial buffers are kept
/// between calls.
template <class Reduction = SerialReduction>
class GramAssembler {
public:
    explicit GramAssembler(Reduction reduction = Reduction()) : m_reduction(std::move(reduction)) {}

    const Reduction& reduction() const { return m_reduction; }

    /// Lower triangle of scale * Phi^T Phi into gram (P x P; the strict upper
    /// triangle is left untouched), scale * Phi^T R into rhs (P x m).
    void assemble(const MatrixView& features, const MatrixView& targets, double scale, Matrix& gram, Matrix& rhs)
    {
        const Index width = features.cols();
        // At least 4P rows per block: every block's rank-k update rewrites its
        // P x P triangle, so thin blocks of a wide Gram matrix are bound by
        // memory traffic (measured, N = 10 000, P = 1 024, OpenBLAS: 8 blocks
        // reach 48 % of the FMA peak, 2 blocks 70 %). Depends on sizes only.
        const RowBlocks blocks(features.rows(), std::max<Index>(512, 4 * width));
        gram.resize(width, width);
        rhs.resize(width, targets.cols());
        if (blocks.count == 1) {
            formBlock(features, targets, scale, gram, rhs);
            return;
        }
        m_partialGrams.resize(static_cast<std::size_t>(blocks.count));
        m_partialRhs.resize(static_cast<std::size_t>(blocks.count));
        m_reduction.run(blocks.count, [&](Index b) {
            const auto i = static_cast<std::size_t>(b);
            m_partialGrams[i].resize(width, width);
            m_partialRhs[i].resize(width, targets.cols());
            formBlock(features.middleRows(blocks.begin(b), blocks.size(b)),
                      targets.middleRows(blocks.begin(b), blocks.size(b)), scale, m_partialGrams[i], m_partialRhs[i]);
        });
        gram.triangularView<Eigen::Lower>() = m_partialGrams[0];
        rhs = m_partialRhs[0];
        for (std::size_t i = 1; i < m_partialGrams.size(); ++i) {
            gram.triangularView<Eigen::Lower>() += m_partialGrams[i];
            rhs += m_partialRhs[i];
        }
    }

private:
    static void formBlock(const MatrixView& features, const MatrixView& targets, double scale, Matrix& gram,
                          Matrix& rhs)
    {
#if defined(WAVESTACK_USE_CBLAS)
        // Column-major Phi with leading dimension outerStride: gram = scale * Phi^T Phi (lower).
        cblas_dsyrk(CblasColMajor, CblasLower, CblasTrans, static_cast<int>(features.cols()),
                    static_cast<int>(features.rows()), scale, features.data(), static_cast<int>(features.outerStride()),
                    0.0, gram.data(), static_cast<int>(gram.outerStride()));
#else
        gram.triangularView<Eigen::Lower>().setZero();
        gram.selfadjointView<Eigen::Lower>().rankUpdate(features.transpose(), scale);
#endif
        rhs.noalias() = features.transpose() * targets;
        rhs *= scale;
    }

    Reduction m_reduction;
    std::vector<Matrix> m_partialGrams;
    std::vector<Matrix> m_partialRhs;
};

}  // namespace wavestack
