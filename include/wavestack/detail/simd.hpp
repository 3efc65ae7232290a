#pragma once
/// \file
/// Small vectorised kernels shared by feature evaluation: sine and cosine of
/// an array, and dot products. Each uses xsimd's widest batch for the build's
/// target (compile with -march=native or -mavx2 to get 4 or 8 lanes).

#include <cmath>

#include <xsimd/xsimd.hpp>

#include "wavestack/core/types.hpp"

namespace wavestack::detail {

using DoubleBatch = xsimd::batch<double>;
constexpr Index doubleLanes = static_cast<Index>(DoubleBatch::size);

/// sine[i] = sin(angle[i]), cosine[i] = cos(angle[i]) for i < count.
/// `cosine` may alias `angle` (each batch is loaded before it is stored).
inline void sincos(const double* angle, double* sine, double* cosine, Index count) noexcept
{
    const Index vectorEnd = count - count % doubleLanes;
    for (Index i = 0; i < vectorEnd; i += doubleLanes) {
        const auto [s, c] = xsimd::sincos(DoubleBatch::load_unaligned(angle + i));
        s.store_unaligned(sine + i);
        c.store_unaligned(cosine + i);
    }
    for (Index i = vectorEnd; i < count; ++i) {
        const double a = angle[i];
        sine[i] = std::sin(a);
        cosine[i] = std::cos(a);
    }
}

/// sum_i a[i] * b[i]. The compiler may not reorder a floating-point sum by
/// itself, so a plain loop runs one FMA per latency period; lane-wise
/// partial sums run one per cycle.
inline double dot(const double* a, const double* b, Index count) noexcept
{
    const Index vectorEnd = count - count % doubleLanes;
    DoubleBatch sum(0.0);
    for (Index i = 0; i < vectorEnd; i += doubleLanes)
        sum = xsimd::fma(DoubleBatch::load_unaligned(a + i), DoubleBatch::load_unaligned(b + i), sum);
    double total = xsimd::hadd(sum);
    for (Index i = vectorEnd; i < count; ++i)
        total += a[i] * b[i];
    return total;
}

}  // namespace wavestack::detail
