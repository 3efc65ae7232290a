#pragma once
/// \file
/// Gaussian frequency sampler.
///
/// Sampler contract (every sampler provides it):
/// `Matrix draw(Index count, Index parameterSize, Random&)` returns a
/// count x parameterSize matrix of parameter rows. Samplers know nothing of
/// the feature map or the solver they serve.

#include "wavestack/core/random.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/core/validate.hpp"

namespace wavestack {

/// Independent normal entries with mean 0 and standard deviation `stddev`:
/// random Fourier features for a Gaussian kernel of length scale 1/stddev in
/// scaled input coordinates (Rahimi & Recht 2007).
class GaussianSampler {
public:
    /// Default chosen by measurement on the Ishigami and plane-wall demo data,
    /// inputs scaled to [-1, 1]; see DEVELOPERS.md.
    static constexpr double defaultStddev = 3.0;

    explicit GaussianSampler(double stddev = defaultStddev) : m_stddev(stddev)
    {
        detail::requirePositive(stddev, "GaussianSampler: stddev");
    }

    double stddev() const { return m_stddev; }

    Matrix draw(Index count, Index parameterSize, Random& random) const
    {
        Matrix parameters(count, parameterSize);
        // Row by row, so the first rows do not depend on how many are drawn.
        for (Index k = 0; k < count; ++k)
            for (Index j = 0; j < parameterSize; ++j)
                parameters(k, j) = m_stddev * random.normal();
        return parameters;
    }

private:
    double m_stddev;
};

}  // namespace wavestack
