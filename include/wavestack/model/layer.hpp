#pragma once
/// \file
/// Parameters of one layer of Fourier features.

#include "wavestack/core/types.hpp"

namespace wavestack {

/// K frequencies in scaled input coordinates (K x d, row k = w_k) and their
/// amplitudes (2K x m: row k is the cosine amplitude of frequency k for each
/// output, row K + k the sine amplitude), in standardised output units.
struct FourierLayer {
    Matrix frequencies;
    Matrix amplitudes;

    Index width() const { return frequencies.rows(); }

    /// |b_k|: Euclidean norm of frequency k's amplitude pair over all outputs.
    Vector amplitudeNorms() const
    {
        const Index count = width();
        return (amplitudes.topRows(count).rowwise().squaredNorm() +
                amplitudes.bottomRows(count).rowwise().squaredNorm())
            .cwiseSqrt();
    }
};

}  // namespace wavestack
