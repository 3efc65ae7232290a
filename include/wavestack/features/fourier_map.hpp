#pragma once
/// \file
/// Real Fourier feature map: random Fourier features (Rahimi & Recht, "Random
/// features for large-scale kernel machines", NIPS 2007).
///
/// Feature-map contract (every map provides these static members):
///   - `featuresPerParameter`: feature columns produced per parameter row;
///   - `parameterSize(inputCount)`: length of one parameter row;
///   - `features(U, parameters, Phi)`: fills the N x (featuresPerParameter*K)
///     feature matrix for N points (rows of U) and K parameter rows.
/// Samplers and solvers see only parameter rows and feature columns, never
/// which map produced them.

#include "wavestack/core/types.hpp"
#include "wavestack/detail/sincos.hpp"

namespace wavestack {

/// phi_k(u) = (cos(w_k . u), sin(w_k . u)). A parameter row is a frequency w_k.
///
/// Column layout of the feature matrix for K frequencies: columns 0..K-1 hold
/// the cosines, columns K..2K-1 the sines, so the amplitude pair of
/// frequency k is rows k and K + k of the amplitude matrix.
struct FourierMap {
    static constexpr Index featuresPerParameter = 2;

    static Index parameterSize(Index inputCount) { return inputCount; }

    /// Phi (N x 2K) from scaled inputs U (N x d) and frequencies W (K x d).
    static void features(const MatrixView& inputs, const MatrixView& frequencies, Eigen::Ref<Matrix> phi)
    {
        const Index count = frequencies.rows();
        const Index points = inputs.rows();
        auto cosines = phi.leftCols(count);
        cosines.noalias() = inputs * frequencies.transpose();
        for (Index k = 0; k < count; ++k)  // columns are contiguous: one kernel call each
            detail::sincos(&cosines(0, k), &phi(0, count + k), &cosines(0, k), points);
    }
};

}  // namespace wavestack
