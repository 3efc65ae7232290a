#pragma once
/// \file
/// A trained network evaluated in single precision for speed (twice the SIMD
/// lanes of double), when single precision is accurate enough for it.
///
/// Float rounding of a parameter or a sum costs about 6e-8 of its size, so
/// the error it adds grows with the amplitudes and frequencies: small for a
/// model fitted with a moderate lambda, but a model whose ridge lambda was
/// 1e-16 or below can carry amplitudes of 1e3-2e5 that cancel to an output
/// of order 1, and in float such models lost up to 570x in accuracy
/// (Ishigami, N = 1 000: test relative RMSE 8.5e-4 in double, 4.9e-2 in
/// float; the float table in bench/results/suite.md). So the constructor
/// measures what float costs this model and evaluates in double, converting
/// inputs and outputs, when the cost is more than a quarter of the error the
/// model already has.

#include <array>
#include <string>
#include <vector>

#include "wavestack/core/error.hpp"
#include "wavestack/core/random.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/model/evaluator.hpp"
#include "wavestack/model/network.hpp"

namespace wavestack {

/// The float-vs-double RMS difference FloatNetwork accepts, as a share of
/// the model's held-out RMSE (per output). A quarter keeps the total error
/// within sqrt(1 + 0.25^2) = 1.03x of double's when the two are independent.
constexpr double floatErrorShare = 0.25;

/// Points FloatNetwork compares float and double on: uniform in the training
/// box (the input scaler's box for a model without a recorded domain).
constexpr Index floatCheckPoints = 1024;


class FloatNetwork {
public:
    using MatrixF = Eigen::MatrixXf;

    explicit FloatNetwork(const Network& network)
        : m_single(network.inputScaler(), network.outputScaler(), network.layers(), network.stateInput(),
                   network.kernelTerm()),
          m_double(network.evaluator())
    {
        const Index d = network.inputCount(), m = network.outputCount();
        const bool hasDomain = !network.domain().empty();
        const Vector lower = hasDomain ? network.domain().lower() : network.inputScaler().box().lower;
        const Vector upper = hasDomain ? network.domain().upper() : network.inputScaler().box().upper;
        Random random(20261205);  // fixed: the same model always makes the same choice
        Matrix x(floatCheckPoints, d);
        for (Index i = 0; i < x.rows(); ++i)
            for (Index j = 0; j < d; ++j)
                x(i, j) = lower[j] + (upper[j] - lower[j]) * random.uniform();
        const Matrix reference = m_double.evaluateBatch(x);
        const Matrix rounded = m_single.evaluateBatch(x.cast<float>()).cast<double>();
        m_deviation = ((rounded - reference).array().square().colwise().mean().sqrt()).transpose();

        // Without held-out metrics there is no error to compare against:
        // float stays, as it did before the check existed.
        const auto& heldOut = network.record().heldOutMetrics;
        m_useSingle = true;
        if (Index(heldOut.size()) == m)
            for (Index o = 0; o < m; ++o)
                if (!(m_deviation[o] <= floatErrorShare * heldOut[std::size_t(o)].rmse))
                    m_useSingle = false;
        // Keep only the evaluator in use: the other would double the memory.
        if (m_useSingle)
            m_double = Evaluator<double>();
        else
            m_single = Evaluator<float>();
    }

    Index inputCount() const { return m_useSingle ? m_single.inputCount() : m_double.inputCount(); }
    Index outputCount() const { return m_useSingle ? m_single.outputCount() : m_double.outputCount(); }

    /// True when evaluation runs in float; false when float rounding would
    /// add more than floatErrorShare of the held-out RMSE and it runs in double.
    bool single() const { return m_useSingle; }

    /// Per output, the RMS difference of float from double evaluation on
    /// floatCheckPoints points of the training box (output units).
    const Vector& floatDeviation() const { return m_deviation; }

    /// One point; no checks, no allocation up to maxStackOutputs outputs and
    /// maxStackInputs inputs.
    void evaluate(const float* x, float* y) const
    {
        if (m_useSingle) {
            m_single.evaluate(x, y);
            return;
        }
        const Index d = inputCount(), m = outputCount();
        if (d <= maxStackInputs && m <= maxStackOutputs) {
            std::array<double, maxStackInputs + maxStackOutputs> buffer;  // inputs, then outputs
            evaluateInDouble(x, y, buffer.data(), buffer.data() + d);
        } else {
            std::vector<double> in(static_cast<std::size_t>(d)), out(static_cast<std::size_t>(m));
            evaluateInDouble(x, y, in.data(), out.data());
        }
    }

    /// A batch, rows = points; returns N x outputCount().
    MatrixF evaluateBatch(const Eigen::Ref<const MatrixF>& inputs) const
    {
        if (inputs.cols() != inputCount())
            throw InvalidInput("FloatNetwork::evaluateBatch: the inputs have " + std::to_string(inputs.cols()) +
                               " columns but the network has " + std::to_string(inputCount()) + " inputs");
        if (m_useSingle)
            return m_single.evaluateBatch(inputs);
        return m_double.evaluateBatch(inputs.cast<double>()).cast<float>();
    }

private:
    void evaluateInDouble(const float* x, float* y, double* in, double* out) const
    {
        for (Index j = 0; j < inputCount(); ++j)
            in[j] = double(x[j]);
        m_double.evaluate(in, out);
        for (Index o = 0; o < outputCount(); ++o)
            y[o] = float(out[o]);
    }

    Evaluator<float> m_single;
    Evaluator<double> m_double;
    Vector m_deviation;
    bool m_useSingle = true;
};

}  // namespace wavestack
