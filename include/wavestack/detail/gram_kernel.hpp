#pragma once
/// \file
/// Register-blocked kernel for the lower triangle of Phi^T Phi, the inner
/// loop of every ridge solve. Same scheme as a BLAS level-3 product (pack
/// into contiguous panels, a micro-tile of accumulators held in registers,
/// common practice since Goto & van de Geijn, ACM TOMS 34(3), 2008), cut to
/// the one product the library needs: A = Phi^T, B = Phi, lower triangle only.
///
/// Why our own: at N = 10 000 on AVX-512, Eigen 3.4's rankUpdate reaches
/// 53-58 % of the FMA peak and Debian 12's OpenBLAS dsyrk 54-66 %; the
/// assembly with this kernel 71-89 % for P = 256-1 024 (bench/gram_bench,
/// DEVELOPERS.md "Gram assembly speed").

#include <algorithm>
#include <vector>

#include <xsimd/xsimd.hpp>

#include "wavestack/core/types.hpp"

namespace wavestack::detail {

/// Computes Phi^T Phi for a column-major Phi (rows x P) into a padded square
/// matrix. Keeps its packing buffer between calls; one object per thread.
template <class Arch = xsimd::default_arch>
class GramKernel {
public:
    using Batch = xsimd::batch<double, Arch>;
    /// Features per panel: one SIMD register of doubles.
    static constexpr Index panelWidth = static_cast<Index>(Batch::size);

    /// P rounded up to whole panels: the side of lowerProduct's output.
    static Index paddedWidth(Index width) { return (width + panelWidth - 1) / panelWidth * panelWidth; }

    /// out (resized to paddedWidth(P) square) gets Phi^T Phi in the lower
    /// triangle of its top-left P x P block; every other entry is unspecified.
    /// rhs (P x m) gets Phi^T R, formed chunk by chunk while the chunk is in
    /// cache (a separate pass over Phi cost 5 % of the time, measured). Sums
    /// run over rows in order, in chunks of fixed size, so the result depends
    /// on the data and P only.
    void lowerProduct(const MatrixView& phi, const MatrixView& targets, Matrix& out, Matrix& rhs)
    {
        const Index rows = phi.rows(), width = phi.cols();
        const Index panels = paddedWidth(width) / panelWidth, padded = panels * panelWidth;
        out.setZero(padded, padded);
        rhs.setZero(width, targets.cols());
        if (rows == 0 || width == 0)
            return;
        // Packed rows x P chunk kept within half of a 1 MiB L2 cache, so the
        // tiles of A that each B panel passes over stay there (measured at
        // N = 10 000 on AVX-512: P = 1 024 runs 11 % faster at 64 rows than at 128).
        const Index chunk = std::clamp<Index>((Index(1) << 16) / padded, 32, 256);
        m_packed.resize(static_cast<std::size_t>(std::min(chunk, rows) * padded));
        m_zeros.assign(static_cast<std::size_t>(std::min(chunk, rows)), 0.0);
        for (Index begin = 0; begin < rows; begin += chunk) {
            const Index count = std::min(chunk, rows - begin);
            pack(phi, begin, count, panels);
            rhs.noalias() += phi.middleRows(begin, count).transpose() * targets.middleRows(begin, count);
            const Index panelSize = count * panelWidth;
            for (Index j = 0; j < panels; ++j)
                for (Index i = j; i < panels; i += tilePanels) {
                    const double* a = m_packed.data() + i * panelSize;
                    const double* b = m_packed.data() + j * panelSize;
                    double* c = out.data() + j * panelWidth * padded + i * panelWidth;
                    switch (std::min(tilePanels, panels - i)) {
                    case 3: tile<3>(a, panelSize, b, count, c, padded); break;
                    case 2: tile<2>(a, panelSize, b, count, c, padded); break;
                    default: tile<1>(a, panelSize, b, count, c, padded); break;
                    }
                }
        }
    }

private:
    /// Panels per micro-tile: 3 x panelWidth accumulators, 24 of the 32
    /// AVX-512 registers, 12 of AVX2's 16, plus 3 loads and one broadcast.
    static constexpr Index tilePanels = 3;

    /// Panel g of the chunk holds rows [begin, begin + count) of features
    /// [g W, g W + W) row by row (W = panelWidth), zeros past P.
    void pack(const MatrixView& phi, Index begin, Index count, Index panels)
    {
        const double* source[panelWidth];
        for (Index g = 0; g < panels; ++g) {
            for (Index t = 0; t < panelWidth; ++t) {
                const Index column = g * panelWidth + t;
                source[t] = column < phi.cols() ? phi.data() + column * phi.outerStride() + begin : m_zeros.data();
            }
            double* target = m_packed.data() + g * count * panelWidth;
            for (Index n = 0; n < count; ++n)
#pragma GCC unroll 16
                for (Index t = 0; t < panelWidth; ++t)
                    target[n * panelWidth + t] = source[t][n];
        }
    }

    /// c[MA W x W tile, column-major, leading dimension ldc] += A^T B over
    /// `count` packed rows: MA panels of A (panelStride apart) and one of B.
    /// The pragmas unroll at -O2 too (GCC 12 leaves these loops rolled
    /// there and the accumulators in memory: 4x slower, measured).
    template <int MA>
    static void tile(const double* a, Index panelStride, const double* b, Index count, double* c, Index ldc)
    {
        constexpr int W = static_cast<int>(panelWidth);
        Batch acc[MA][W];
#pragma GCC unroll 4
        for (int p = 0; p < MA; ++p)
#pragma GCC unroll 16
            for (int j = 0; j < W; ++j)
                acc[p][j] = Batch(0.0);
        for (Index n = 0; n < count; ++n) {
            Batch column[MA];
#pragma GCC unroll 4
            for (int p = 0; p < MA; ++p)
                column[p] = Batch::load_aligned(a + p * panelStride + n * W);
#pragma GCC unroll 16
            for (int j = 0; j < W; ++j) {
                const Batch broadcast(b[n * W + j]);
#pragma GCC unroll 4
                for (int p = 0; p < MA; ++p)
                    acc[p][j] = xsimd::fma(column[p], broadcast, acc[p][j]);
            }
        }
        for (int j = 0; j < W; ++j)
            for (int p = 0; p < MA; ++p) {
                double* target = c + j * ldc + p * W;
                (Batch::load_unaligned(target) + acc[p][j]).store_unaligned(target);
            }
    }

    std::vector<double, xsimd::aligned_allocator<double, Arch::alignment()>> m_packed;
    std::vector<double> m_zeros;
};

}  // namespace wavestack::detail
