#pragma once
/// \file
/// Adam (Kingma & Ba, "Adam: a method for stochastic optimization", ICLR
/// 2015), Algorithm 1, on a flat parameter vector.

#include <cmath>

#include "wavestack/core/types.hpp"

namespace wavestack {

struct AdamSettings {
    double beta1 = 0.9;    ///< paper's default
    double beta2 = 0.999;  ///< paper's default
    double epsilon = 1e-8; ///< paper's default
};

class AdamOptimizer {
public:
    explicit AdamOptimizer(Index size, const AdamSettings& settings = AdamSettings())
        : m_settings(settings), m_first(Vector::Zero(size)), m_second(Vector::Zero(size))
    {
    }

    /// One step: parameters -= rate .* mhat / (sqrt(vhat) + epsilon), with
    /// `rate` one learning rate per parameter (groups may differ).
    void step(Vector& parameters, const Vector& gradient, const Vector& rate)
    {
        ++m_steps;
        const double b1 = m_settings.beta1, b2 = m_settings.beta2;
        m_first = b1 * m_first + (1.0 - b1) * gradient;
        m_second = b2 * m_second + (1.0 - b2) * gradient.cwiseAbs2();
        const double correction1 = 1.0 - std::pow(b1, double(m_steps));
        const double correction2 = 1.0 - std::pow(b2, double(m_steps));
        parameters.array() -= rate.array() * (m_first.array() / correction1) /
                              ((m_second.array() / correction2).sqrt() + m_settings.epsilon);
    }

    Index steps() const { return m_steps; }

private:
    AdamSettings m_settings;
    Vector m_first, m_second;
    Index m_steps = 0;
};

}  // namespace wavestack
