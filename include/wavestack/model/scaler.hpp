#pragma once
/// \file
/// Affine maps between the user's units and the model's internal ones.
///
/// Inputs go to the standard box [-1, 1]^d, so one frequency scale suits every
/// input whatever its units. Outputs are standardised per column (mean 0,
/// standard deviation 1), so one lambda suits every output.

#include <cmath>
#include <string>
#include <utility>

#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/core/validate.hpp"

namespace wavestack {

/// An axis-aligned box of inputs: lower[j] <= x_j <= upper[j].
struct InputBox {
    Vector lower;
    Vector upper;
};

/// u_j = scale_j * x_j + offset_j, mapping the box [lower, upper] onto
/// [-1, 1]^d. A column of zero width (a constant input) gets scale 1 and is
/// only shifted to 0: nothing is divided by zero and the column stays harmless.
class InputScaler {
public:
    InputScaler() = default;

    explicit InputScaler(const InputBox& box) : m_box(box)
    {
        if (box.lower.size() != box.upper.size())
            throw InvalidInput("InputScaler: box lower has " + std::to_string(box.lower.size()) +
                               " entries but upper has " + std::to_string(box.upper.size()));
        detail::requireFinite(box.lower, "InputScaler: box lower");
        detail::requireFinite(box.upper, "InputScaler: box upper");
        const Index d = box.lower.size();
        m_scale.resize(d);
        m_offset.resize(d);
        for (Index j = 0; j < d; ++j) {
            const double width = box.upper[j] - box.lower[j];
            if (width < 0.0)
                throw InvalidInput("InputScaler: box column " + std::to_string(j) + " has upper < lower");
            const double centre = 0.5 * (box.lower[j] + box.upper[j]);
            m_scale[j] = width > 0.0 ? 2.0 / width : 1.0;
            m_offset[j] = -m_scale[j] * centre;
        }
    }

    /// The smallest box holding every row of `inputs`.
    static InputScaler fromData(const MatrixView& inputs)
    {
        return InputScaler(InputBox{inputs.colwise().minCoeff().transpose(), inputs.colwise().maxCoeff().transpose()});
    }

    Index inputCount() const { return m_scale.size(); }
    const InputBox& box() const { return m_box; }
    const Vector& scale() const { return m_scale; }
    const Vector& offset() const { return m_offset; }

    /// Scaled copy of `inputs` (rows = points).
    Matrix apply(const MatrixView& inputs) const
    {
        return (inputs * m_scale.asDiagonal()).rowwise() + m_offset.transpose();
    }

private:
    InputBox m_box;
    Vector m_scale;
    Vector m_offset;
};

/// y_s = (y - mean) / deviation per output column. A constant column gets
/// deviation 1, so the model reproduces the constant exactly.
class OutputScaler {
public:
    OutputScaler() = default;
    OutputScaler(Vector mean, Vector deviation) : m_mean(std::move(mean)), m_deviation(std::move(deviation)) {}

    static OutputScaler fromData(const MatrixView& outputs)
    {
        const Vector mean = outputs.colwise().mean().transpose();
        Vector deviation(outputs.cols());
        for (Index j = 0; j < outputs.cols(); ++j) {
            const double variance = (outputs.col(j).array() - mean[j]).square().mean();
            deviation[j] = variance > 0.0 ? std::sqrt(variance) : 1.0;
        }
        return OutputScaler(mean, deviation);
    }

    Index outputCount() const { return m_mean.size(); }
    const Vector& mean() const { return m_mean; }
    const Vector& deviation() const { return m_deviation; }

    Matrix apply(const MatrixView& outputs) const
    {
        return (outputs.rowwise() - m_mean.transpose()) * m_deviation.cwiseInverse().asDiagonal();
    }

private:
    Vector m_mean;
    Vector m_deviation;
};

}  // namespace wavestack
