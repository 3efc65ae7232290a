#pragma once
/// \file
/// A trained network converted to single precision for speed: twice the
/// SIMD lanes of double. Parameters are rounded to float once; expect
/// output errors of a few 1e-7 of the output scale times the number of
/// terms summed, and angle errors of about 6e-8 |w . x| (large frequencies
/// times large inputs lose the most). Check the float model against your
/// tolerance before using it.

#include <string>

#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/model/evaluator.hpp"
#include "wavestack/model/network.hpp"

namespace wavestack {

class FloatNetwork {
public:
    using MatrixF = Eigen::MatrixXf;

    explicit FloatNetwork(const Network& network)
        : m_evaluator(network.inputScaler(), network.outputScaler(), network.layers(), network.stateInput())
    {
    }

    Index inputCount() const { return m_evaluator.inputCount(); }
    Index outputCount() const { return m_evaluator.outputCount(); }

    /// One point; no checks, no allocation up to maxStackOutputs outputs.
    void evaluate(const float* x, float* y) const { m_evaluator.evaluate(x, y); }

    /// A batch, rows = points; returns N x outputCount().
    MatrixF evaluateBatch(const Eigen::Ref<const MatrixF>& inputs) const
    {
        if (inputs.cols() != inputCount())
            throw InvalidInput("FloatNetwork::evaluateBatch: the inputs have " + std::to_string(inputs.cols()) +
                               " columns but the network has " + std::to_string(inputCount()) + " inputs");
        return m_evaluator.evaluateBatch(inputs);
    }

private:
    Evaluator<float> m_evaluator;
};

}  // namespace wavestack
