#pragma once
/// \file
/// Sigmoidal ridge feature map: phi_k(u) = tanh(w_k . u + c_k).
///
/// Superpositions of sigmoidal ridge functions approximate any function with
/// a finite first Fourier moment (Barron, "Universal approximation bounds for
/// superpositions of a sigmoidal function", IEEE Trans. Inf. Theory 1993).
/// One ridge feature is a smoothed step across the hyperplane w . u + c = 0,
/// so a front that Fourier features ring on costs a single feature.
/// Contract: see features/fourier_map.hpp.

#include <cmath>

#include <xsimd/xsimd.hpp>

#include "wavestack/core/types.hpp"

namespace wavestack {

/// A parameter row is (w_k, c_k): d slopes, then the offset.
struct RidgeMap {
    static constexpr Index featuresPerParameter = 1;
    static constexpr bool hasOffset = true;

    static void activate(double* first, double* /*second*/, Index count) noexcept
    {
        using Batch = xsimd::batch<double>;
        constexpr Index lanes = static_cast<Index>(Batch::size);
        Index i = 0;
        for (; i + lanes <= count; i += lanes)
            xsimd::tanh(Batch::load_unaligned(first + i)).store_unaligned(first + i);
        for (; i < count; ++i)
            first[i] = std::tanh(first[i]);
    }

    /// d tanh a / da = 1 - tanh^2 a.
    static void slope(const double* first, const double* /*second*/, double* dFirst, double* /*dSecond*/,
                      Index count) noexcept
    {
        for (Index i = 0; i < count; ++i)
            dFirst[i] = 1.0 - first[i] * first[i];
    }
};

}  // namespace wavestack
