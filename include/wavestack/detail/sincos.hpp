#pragma once
/// \file
/// Vectorised sine and cosine of an array, the inner kernel of every Fourier
/// feature evaluation. Uses xsimd's sincos on the widest batch the build
/// targets (compile with -march=native or -mavx2 to get 4 or 8 lanes).

#include <cmath>

#include <xsimd/xsimd.hpp>

#include "wavestack/core/types.hpp"

namespace wavestack::detail {

/// sine[i] = sin(angle[i]), cosine[i] = cos(angle[i]) for i < count.
/// `cosine` may alias `angle` (each batch is loaded before it is stored).
inline void sincos(const double* angle, double* sine, double* cosine, Index count) noexcept
{
    using Batch = xsimd::batch<double>;
    constexpr Index lanes = static_cast<Index>(Batch::size);
    Index i = 0;
    for (; i + lanes <= count; i += lanes) {
        const auto [s, c] = xsimd::sincos(Batch::load_unaligned(angle + i));
        s.store_unaligned(sine + i);
        c.store_unaligned(cosine + i);
    }
    for (; i < count; ++i) {
        const double a = angle[i];
        sine[i] = std::sin(a);
        cosine[i] = std::cos(a);
    }
}

}  // namespace wavestack::detail
