#pragma once
/// \file
/// A sampler that returns parameter rows chosen by the user, for example
/// frequencies known from the physics of the target. Contract: see
/// sampling/gaussian_sampler.hpp.

#include <string>
#include <utility>
#include <vector>

#include "wavestack/core/error.hpp"
#include "wavestack/core/random.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/core/validate.hpp"
#include "wavestack/features/feature_group.hpp"
#include "wavestack/train/layer_problem.hpp"

namespace wavestack {

class FixedSampler {
public:
    /// One matrix of parameter rows per feature group, in the layer's group order.
    explicit FixedSampler(std::vector<Matrix> parameters) : m_parameters(std::move(parameters))
    {
        for (const auto& p : m_parameters)
            detail::requireFinite(p, "FixedSampler: parameters");
    }
    explicit FixedSampler(Matrix parameters) : FixedSampler(std::vector<Matrix>{std::move(parameters)}) {}

    template <class Problem>
    std::vector<FeatureGroup> sample(Problem& problem, const std::vector<GroupShape>& shapes, Random& /*random*/) const
    {
        if (shapes.size() != m_parameters.size())
            throw InvalidInput("FixedSampler: the layer has " + std::to_string(shapes.size()) +
                               " feature groups but " + std::to_string(m_parameters.size()) + " were given");
        std::vector<FeatureGroup> groups;
        for (std::size_t g = 0; g < shapes.size(); ++g) {
            const Index rows = shapes[g].width;
            const Index cols = problem.parameterSize(shapes[g]);
            if (m_parameters[g].rows() != rows || m_parameters[g].cols() != cols)
                throw InvalidInput("FixedSampler: group " + std::to_string(g) + " needs " + std::to_string(rows) +
                                   " x " + std::to_string(cols) + " parameters but " +
                                   std::to_string(m_parameters[g].rows()) + " x " +
                                   std::to_string(m_parameters[g].cols()) + " were given");
            groups.push_back(FeatureGroup{shapes[g].kind, m_parameters[g], shapes[g].source});
        }
        return groups;
    }

private:
    std::vector<Matrix> m_parameters;
};

}  // namespace wavestack
