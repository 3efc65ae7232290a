#pragma once
/// \file
/// A sampler that returns parameter rows chosen by the user.

#include <string>
#include <utility>

#include "wavestack/core/error.hpp"
#include "wavestack/core/random.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/core/validate.hpp"

namespace wavestack {

/// Hands out parameter rows given by the user, for example frequencies known
/// from the physics of the target. `draw` checks the requested shape.
class FixedSampler {
public:
    explicit FixedSampler(Matrix parameters) : m_parameters(std::move(parameters))
    {
        detail::requireFinite(m_parameters, "FixedSampler: parameters");
    }

    Matrix draw(Index count, Index parameterSize, Random& /*random*/) const
    {
        if (count != m_parameters.rows() || parameterSize != m_parameters.cols())
            throw InvalidInput("FixedSampler: asked for " + std::to_string(count) + " x " +
                               std::to_string(parameterSize) + " parameters but holds " +
                               std::to_string(m_parameters.rows()) + " x " + std::to_string(m_parameters.cols()));
        return m_parameters;
    }

private:
    Matrix m_parameters;
};

}  // namespace wavestack
