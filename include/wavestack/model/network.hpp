#pragma once
/// \file
/// The trained surrogate: scalers plus a layer of feature groups. A network
/// only holds parameters and evaluates them; it never trains and never
/// prints. Evaluation is const and thread-safe, and the single-point path
/// allocates nothing, so host codes may call it from many threads in their
/// inner loops.

#include <algorithm>
#include <string>
#include <utility>
#include <vector>

#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/detail/simd.hpp"
#include "wavestack/model/layer.hpp"
#include "wavestack/model/scaler.hpp"

namespace wavestack {

/// f(x) = mean + deviation * sum_k b_k . phi_k(S(x)), S the input scaler:
/// the shallow network (random Fourier features and/or ridge features).
class Network {
public:
    Network() = default;

    Network(InputScaler inputScaler, OutputScaler outputScaler, Layer layer)
        : m_inputScaler(std::move(inputScaler)), m_outputScaler(std::move(outputScaler)), m_layer(std::move(layer))
    {
        const Index d = m_inputScaler.inputCount();
        for (const auto& group : m_layer.groups)
            if (group.parameters.cols() != parameterSize(group.kind, d))
                throw InvalidInput(std::string("Network: a ") + featureKindName(group.kind) + " group has " +
                                   std::to_string(group.parameters.cols()) + " parameters per row, expected " +
                                   std::to_string(parameterSize(group.kind, d)) + " for " + std::to_string(d) +
                                   " inputs");
        if (m_layer.amplitudes.rows() != m_layer.featureCount() ||
            m_layer.amplitudes.cols() != m_outputScaler.outputCount())
            throw InvalidInput("Network: amplitudes are " + std::to_string(m_layer.amplitudes.rows()) + " x " +
                               std::to_string(m_layer.amplitudes.cols()) + ", expected " +
                               std::to_string(m_layer.featureCount()) + " features x " +
                               std::to_string(m_outputScaler.outputCount()) + " outputs");
        Index column = 0;
        for (const auto& group : m_layer.groups) {
            m_kernels.push_back(foldScalers(group, column));
            column += group.featureCount();
        }
    }

    Index inputCount() const { return m_inputScaler.inputCount(); }
    Index outputCount() const { return m_outputScaler.outputCount(); }
    /// Parameter rows (frequencies, ridge directions) over all groups.
    Index width() const { return m_layer.width(); }

    const InputScaler& inputScaler() const { return m_inputScaler; }
    const OutputScaler& outputScaler() const { return m_outputScaler; }
    const Layer& layer() const { return m_layer; }

    /// One point: reads inputCount() values at x, writes outputCount() at y.
    /// No checks and no allocation: the inner-loop entry point.
    void evaluate(const double* x, double* y) const noexcept
    {
        const Index m = outputCount();
        for (Index o = 0; o < m; ++o)
            y[o] = m_outputScaler.mean()[o];
        for (const auto& kernel : m_kernels)
            withFeatureMap(kernel.kind, [&](auto map) { accumulatePoint<decltype(map)>(kernel, x, y); });
    }

    /// One point, with a size check.
    Vector evaluate(const VectorView& x) const
    {
        requireInputs(x.size(), "Network::evaluate: the point");
        const Vector contiguous = x;  // a Ref may be strided; the kernel wants a plain array
        Vector y(outputCount());
        evaluate(contiguous.data(), y.data());
        return y;
    }

    /// A batch, rows = points; returns N x outputCount().
    Matrix evaluateBatch(const MatrixView& inputs) const
    {
        requireInputs(inputs.cols(), "Network::evaluateBatch: the inputs' column count");
        const Index points = inputs.rows();
        Matrix outputs(points, outputCount());
        // Row blocks bound the scratch memory whatever N is.
        const Index block = std::min<Index>(256, std::max<Index>(points, 1));
        Index widest = 0;
        for (const auto& kernel : m_kernels)
            widest = std::max(widest, kernel.amplitudes.rows());
        Matrix features(block, widest);
        for (Index r0 = 0; r0 < points; r0 += block) {
            const Index n = std::min(block, points - r0);
            auto out = outputs.middleRows(r0, n);
            out.rowwise() = m_outputScaler.mean().transpose();
            for (const auto& kernel : m_kernels)
                withFeatureMap(kernel.kind, [&](auto map) {
                    accumulateBatch<decltype(map)>(kernel, inputs.middleRows(r0, n), features, out);
                });
        }
        return outputs;
    }

private:
    /// A group laid out for evaluation on unscaled inputs: angle_k =
    /// (w_k * scale) . x + (w_k . offset + c_k), and the output deviation
    /// multiplied into the amplitudes, so evaluation never forms S(x) or
    /// rescales y.
    struct Kernel {
        FeatureKind kind;
        Matrix slopes;       // K x d
        Vector phase;        // K
        Matrix amplitudes;   // featuresPerParameter * K x m
    };

    /// `column`: the group's first feature column in the layer.
    Kernel foldScalers(const FeatureGroup& group, Index column) const
    {
        const Index d = inputCount();
        const auto slopes = group.parameters.leftCols(d);
        Kernel kernel{group.kind, slopes * m_inputScaler.scale().asDiagonal(), slopes * m_inputScaler.offset(),
                      m_layer.amplitudes.middleRows(column, group.featureCount()) *
                          m_outputScaler.deviation().asDiagonal()};
        if (group.parameters.cols() > d)
            kernel.phase += group.parameters.col(d);
        return kernel;
    }

    template <class Map>
    static void accumulatePoint(const Kernel& kernel, const double* x, double* y) noexcept
    {
        constexpr Index chunk = 128;  // parameter rows per pass, on the stack
        alignas(64) double first[chunk];
        alignas(64) double second[chunk];
        const Index d = kernel.slopes.cols();
        const Index width = kernel.slopes.rows();
        const Index m = kernel.amplitudes.cols();
        for (Index k0 = 0; k0 < width; k0 += chunk) {
            const Index n = std::min(chunk, width - k0);
            const double* phase = kernel.phase.data() + k0;
            std::copy(phase, phase + n, first);
            for (Index j = 0; j < d; ++j) {
                const double xj = x[j];
                const double* w = &kernel.slopes(k0, j);
                for (Index k = 0; k < n; ++k)
                    first[k] += w[k] * xj;
            }
            Map::activate(first, second, n);
            for (Index o = 0; o < m; ++o) {
                const double* b = &kernel.amplitudes(k0, o);
                y[o] += detail::dot(b, first, n);
                if constexpr (Map::featuresPerParameter == 2)
                    y[o] += detail::dot(b + width, second, n);  // the second feature's amplitudes follow K rows later
            }
        }
    }

    template <class Map>
    static void accumulateBatch(const Kernel& kernel, const MatrixView& inputs, Matrix& scratch,
                                Eigen::Ref<Matrix> out)
    {
        const Index n = inputs.rows();
        const Index width = kernel.slopes.rows();
        auto features = scratch.block(0, 0, n, kernel.amplitudes.rows());
        auto angles = features.leftCols(width);
        angles.noalias() = inputs * kernel.slopes.transpose();
        angles.rowwise() += kernel.phase.transpose();
        for (Index k = 0; k < width; ++k)
            Map::activate(&features(0, k), Map::featuresPerParameter > 1 ? &features(0, width + k) : nullptr, n);
        out.noalias() += features * kernel.amplitudes;
    }

    void requireInputs(Index count, const char* what) const
    {
        if (count != inputCount())
            throw InvalidInput(std::string(what) + " is " + std::to_string(count) + " but the network has " +
                               std::to_string(inputCount()) + " inputs");
    }

    InputScaler m_inputScaler;
    OutputScaler m_outputScaler;
    Layer m_layer;
    std::vector<Kernel> m_kernels;  // derived from the above, one per group
};

}  // namespace wavestack
