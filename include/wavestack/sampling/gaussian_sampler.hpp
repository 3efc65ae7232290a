#pragma once
/// \file
/// Gaussian frequency sampler: random Fourier features (Rahimi & Recht,
/// "Random features for large-scale kernel machines", NIPS 2007).
///
/// Sampler contract (every sampler provides it):
///   template <class Problem>
///   std::vector<FeatureGroup> sample(Problem&, const std::vector<GroupShape>&, Random&) const;
/// returns one feature group per shape with its parameter rows chosen. The
/// problem (train/layer_problem.hpp) answers amplitude norms and errors for
/// any parameter rows; a sampler never sees the data or the feature map.

#include <vector>

#include "wavestack/core/random.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/core/validate.hpp"
#include "wavestack/features/feature_group.hpp"
#include "wavestack/train/layer_problem.hpp"

namespace wavestack {

/// Independent normal parameters with mean 0 and standard deviation
/// `stddev`: for Fourier features, a Gaussian kernel of length scale
/// 1/stddev in scaled input coordinates.
class GaussianSampler {
public:
    /// Chosen by measurement on the Ishigami and plane-wall data with inputs
    /// scaled to [-1, 1] (DEVELOPERS.md, "Defaults").
    static constexpr double defaultStddev = 3.0;

    explicit GaussianSampler(double stddev = defaultStddev) : m_stddev(stddev)
    {
        detail::requirePositive(stddev, "GaussianSampler: stddev");
    }

    double stddev() const { return m_stddev; }

    /// Draws every parameter independently; the problem only supplies row lengths.
    template <class Problem>
    std::vector<FeatureGroup> sample(const Problem& problem, const std::vector<GroupShape>& shapes,
                                     Random& random) const
    {
        std::vector<FeatureGroup> groups;
        for (const auto& shape : shapes) {
            FeatureGroup group{shape.kind, Matrix(shape.width, problem.parameterSize(shape)), shape.source};
            // Row by row, so the first rows do not depend on how many are drawn.
            for (Index k = 0; k < group.parameters.rows(); ++k)
                for (Index j = 0; j < group.parameters.cols(); ++j)
                    group.parameters(k, j) = m_stddev * random.normal();
            groups.push_back(std::move(group));
        }
        return groups;
    }

private:
    double m_stddev;
};

}  // namespace wavestack
