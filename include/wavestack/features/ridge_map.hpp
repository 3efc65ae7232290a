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

#include "wavestack/core/types.hpp"
#include "wavestack/detail/simd.hpp"

namespace wavestack {

/// A parameter row is (w_k, c_k): d slopes, then the offset.
struct RidgeMap {
    static constexpr Index featuresPerParameter = 1;
    static constexpr bool hasOffset = true;

    template <class T>
    static void activate(T* first, T* /*second*/, Index count) noexcept
    {
        detail::tanhInPlace(first, count);
    }

    /// d tanh a / da = 1 - tanh^2 a.
    template <class T>
    static void slope(const T* first, const T* /*second*/, T* dFirst, T* /*dSecond*/, Index count) noexcept
    {
        for (Index i = 0; i < count; ++i)
            dFirst[i] = T(1) - first[i] * first[i];
    }
};

}  // namespace wavestack
