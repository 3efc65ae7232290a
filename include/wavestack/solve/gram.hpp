#pragma once
/// \file
/// Assembly of the normal equations Phi^T Phi and Phi^T R, the dominant cost
/// of every ridge solve (N x P x (P + 1) flops for the lower triangle).

#include <algorithm>
#include <cstddef>
#include <utility>
#include <vector>

#include "wavestack/core/types.hpp"
#include "wavestack/detail/gram_kernel.hpp"
#include "wavestack/parallel/reduction.hpp"

namespace wavestack {

/// Sums over a fixed cut of the rows (RowBlocks): each block's part is one
/// task of the reduction policy (detail::GramKernel, which forms one triangle
/// only), and the parts are added in block order, so the result is the same
/// bit for bit for every worker count. Partial buffers are kept between calls.
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
        // At least 4P rows per block: every block writes and sums its own
        // P x P triangle (measured, N = 10 000, one thread, this kernel:
        // P = 1 024 at 95 GFLOP/s in 2 blocks, 89 in 8; P = 256 at 82 in 2,
        // 77 in 8; OpenBLAS's dsyrk had lost a third in 8 blocks). Depends on
        // sizes only.
        const RowBlocks blocks(features.rows(), std::max<Index>(512, 4 * width));
        m_parts.resize(static_cast<std::size_t>(blocks.count));
        m_reduction.run(blocks.count, [&](Index b) {
            Part& part = m_parts[static_cast<std::size_t>(b)];
            const auto rows = features.middleRows(blocks.begin(b), blocks.size(b));
            part.kernel.lowerProduct(rows, targets.middleRows(blocks.begin(b), blocks.size(b)), part.gram, part.rhs);
        });
        gram.resize(width, width);
        gram.triangularView<Eigen::Lower>() = m_parts[0].gram.topLeftCorner(width, width);
        rhs = m_parts[0].rhs;
        for (std::size_t i = 1; i < m_parts.size(); ++i) {
            gram.triangularView<Eigen::Lower>() += m_parts[i].gram.topLeftCorner(width, width);
            rhs += m_parts[i].rhs;
        }
        gram.triangularView<Eigen::Lower>() *= scale;
        rhs *= scale;
    }

private:
    /// One row block's unscaled sums and the buffers that make them.
    struct Part {
        Matrix gram;  // lower triangle of its top-left P x P block is valid
        Matrix rhs;
        detail::GramKernel<> kernel;
    };

    Reduction m_reduction;
    std::vector<Part> m_parts;
};

}  // namespace wavestack
