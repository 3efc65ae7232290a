#pragma once
/// \file
/// The trained surrogate: scalers plus Fourier feature layers. A network only
/// holds parameters and evaluates them; it never trains and never prints.
/// Evaluation is const and thread-safe, and the single-point path allocates
/// nothing, so host codes may call it from many threads in their inner loops.

#include <algorithm>
#include <string>

#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/detail/sincos.hpp"
#include "wavestack/model/layer.hpp"
#include "wavestack/model/scaler.hpp"

namespace wavestack {

/// f(x) = mean + deviation * sum_k b_k . (cos(w_k . S(x)), sin(w_k . S(x)))
/// with S the input scaler; the shallow random-Fourier-feature network.
class Network {
public:
    Network() = default;

    Network(InputScaler inputScaler, OutputScaler outputScaler, FourierLayer layer)
        : m_inputScaler(std::move(inputScaler)), m_outputScaler(std::move(outputScaler)), m_layer(std::move(layer))
    {
        const Index d = m_inputScaler.inputCount();
        const Index m = m_outputScaler.outputCount();
        const Index k = m_layer.width();
        if (m_layer.frequencies.cols() != d || m_layer.amplitudes.rows() != 2 * k || m_layer.amplitudes.cols() != m)
            throw InvalidInput("Network: layer shapes (frequencies " + shape(m_layer.frequencies) + ", amplitudes " +
                               shape(m_layer.amplitudes) + ") do not fit " + std::to_string(d) + " inputs and " +
                               std::to_string(m) + " outputs");
        foldScalers();
    }

    Index inputCount() const { return m_inputScaler.inputCount(); }
    Index outputCount() const { return m_outputScaler.outputCount(); }
    Index width() const { return m_layer.width(); }

    const InputScaler& inputScaler() const { return m_inputScaler; }
    const OutputScaler& outputScaler() const { return m_outputScaler; }
    const FourierLayer& layer() const { return m_layer; }

    /// One point: reads inputCount() values at x, writes outputCount() at y.
    /// No checks and no allocation: the inner-loop entry point.
    void evaluate(const double* x, double* y) const noexcept
    {
        const Index d = inputCount();
        const Index m = outputCount();
        const Index width = m_layer.width();
        for (Index o = 0; o < m; ++o)
            y[o] = m_outputScaler.mean()[o];
        // Frequencies in chunks that fit on the stack.
        constexpr Index chunk = 128;
        alignas(64) double angle[chunk];
        alignas(64) double sine[chunk];
        alignas(64) double cosine[chunk];
        for (Index k0 = 0; k0 < width; k0 += chunk) {
            const Index n = std::min(chunk, width - k0);
            const double* phase = m_phase.data() + k0;
            std::copy(phase, phase + n, angle);
            for (Index j = 0; j < d; ++j) {
                const double xj = x[j];
                const double* w = &m_foldedFrequencies(k0, j);
                for (Index k = 0; k < n; ++k)
                    angle[k] += w[k] * xj;
            }
            detail::sincos(angle, sine, cosine, n);
            for (Index o = 0; o < m; ++o) {
                const double* bc = &m_cosineAmplitudes(k0, o);
                const double* bs = &m_sineAmplitudes(k0, o);
                double sum = 0.0;
                for (Index k = 0; k < n; ++k)
                    sum += bc[k] * cosine[k] + bs[k] * sine[k];
                y[o] += sum;
            }
        }
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
        const Index width = m_layer.width();
        Matrix outputs(points, outputCount());
        // Row blocks bound the scratch memory whatever N is.
        const Index block = std::min<Index>(256, std::max<Index>(points, 1));
        Matrix angles(block, width);
        Matrix sines(block, width);
        for (Index r0 = 0; r0 < points; r0 += block) {
            const Index n = std::min(block, points - r0);
            auto a = angles.topRows(n);
            auto s = sines.topRows(n);
            a.noalias() = inputs.middleRows(r0, n) * m_foldedFrequencies.transpose();
            a.rowwise() += m_phase.transpose();
            for (Index k = 0; k < width; ++k)
                detail::sincos(&angles(0, k), &sines(0, k), &angles(0, k), n);
            auto out = outputs.middleRows(r0, n);
            out.noalias() = a * m_cosineAmplitudes;
            out.noalias() += s * m_sineAmplitudes;
            out.rowwise() += m_outputScaler.mean().transpose();
        }
        return outputs;
    }

private:
    static std::string shape(const Matrix& a) { return std::to_string(a.rows()) + " x " + std::to_string(a.cols()); }

    void requireInputs(Index count, const char* what) const
    {
        if (count != inputCount())
            throw InvalidInput(std::string(what) + " is " + std::to_string(count) + " but the network has " +
                               std::to_string(inputCount()) + " inputs");
    }

    /// w . S(x) = (w * scale) . x + w . offset, and the output deviation
    /// multiplies the amplitudes: evaluation never forms S(x) or rescales y.
    void foldScalers()
    {
        const Index width = m_layer.width();
        m_foldedFrequencies = m_layer.frequencies * m_inputScaler.scale().asDiagonal();
        m_phase = m_layer.frequencies * m_inputScaler.offset();
        const auto deviation = m_outputScaler.deviation().asDiagonal();
        m_cosineAmplitudes = m_layer.amplitudes.topRows(width) * deviation;
        m_sineAmplitudes = m_layer.amplitudes.bottomRows(width) * deviation;
    }

    InputScaler m_inputScaler;
    OutputScaler m_outputScaler;
    FourierLayer m_layer;

    // Kernel layout, derived from the above: K x d, K, K x m, K x m.
    Matrix m_foldedFrequencies;
    Vector m_phase;
    Matrix m_cosineAmplitudes;
    Matrix m_sineAmplitudes;
};

}  // namespace wavestack
