#pragma once
/// \file
/// Real Fourier feature map: random Fourier features (Rahimi & Recht, "Random
/// features for large-scale kernel machines", NIPS 2007).
///
/// Feature-map contract. Every map builds its features from affine angles
/// a_k = w_k . u (+ c_k when the map has an offset) of the scaled input u,
/// and provides:
///   - `featuresPerParameter`: feature columns per parameter row (1 or 2);
///   - `hasOffset`: whether a parameter row ends with the offset c_k, so a row
///     has d + hasOffset entries;
///   - `activate(first, second, n)`: turns n angles stored at `first` into
///     the features: feature 0 overwrites `first`, feature 1 (if any) goes
///     to `second`;
///   - `slope(first, second, dFirst, dSecond, n)`: from activated features,
///     their derivatives with respect to the angle (for input gradients and
///     fine-tuning).
/// FeatureGroup (features/feature_group.hpp) builds feature matrices and the
/// network's kernels from these members alone.

#include "wavestack/core/types.hpp"
#include "wavestack/detail/simd.hpp"

namespace wavestack {

/// phi_k(u) = (cos(w_k . u), sin(w_k . u)); a parameter row is a frequency w_k.
struct FourierMap {
    static constexpr Index featuresPerParameter = 2;
    static constexpr bool hasOffset = false;

    template <class T>
    static void activate(T* first, T* second, Index count) noexcept
    {
        detail::sincos(first, second, first, count);  // cosine over the angle, sine beside it
    }

    /// d cos a / da = -sin a, d sin a / da = cos a.
    template <class T>
    static void slope(const T* first, const T* second, T* dFirst, T* dSecond, Index count) noexcept
    {
        for (Index i = 0; i < count; ++i) {
            dFirst[i] = -second[i];
            dSecond[i] = first[i];
        }
    }
};

}  // namespace wavestack
