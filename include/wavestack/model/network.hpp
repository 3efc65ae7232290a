#pragma once
/// \file
/// The trained surrogate: scalers plus layers of feature groups. A network
/// only holds parameters and evaluates them; it never trains and never
/// prints. Evaluation is const and thread-safe; the single-point path
/// allocates nothing (for up to maxStackOutputs outputs), so host codes may
/// call it from many threads in their inner loops.

#include <algorithm>
#include <array>
#include <string>
#include <utility>
#include <vector>

#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/detail/simd.hpp"
#include "wavestack/model/domain.hpp"
#include "wavestack/model/layer.hpp"
#include "wavestack/model/record.hpp"
#include "wavestack/model/scaler.hpp"

namespace wavestack {

/// What the state-reading feature groups of residual layer l see.
enum class StateInput {
    residualState,     ///< s_l = z_l, the published form (the first residual layer sees 0)
    runningPrediction, ///< s_l = f0 + z_l, the prediction so far
};

inline const char* stateInputName(StateInput input)
{
    return input == StateInput::residualState ? "residual-state" : "running-prediction";
}

/// A deep residual network of feature layers (Kammonen et al., "Smaller
/// generalization error derived for a deep residual neural network compared
/// to shallow networks", 2020/2023), in standardised output units:
///
///     f0     = sum_k b_0k . phi(w_0k . u)                      (layer 0, inputs only)
///     z_0    = 0
///     z_l+1  = z_l + sum_k b_lk . phi(w_lk . u) + sum_k c_lk . phi(v_lk . s_l)
///     f(x)   = mean + deviation * (f0 + z_L),   u = S(x)
///
/// with s_l chosen by StateInput. A shallow network is the case of one layer.
class Network {
public:
    /// Outputs the single-point path keeps on the stack; more allocate.
    static constexpr Index maxStackOutputs = 32;

    Network() = default;

    Network(InputScaler inputScaler, OutputScaler outputScaler, std::vector<Layer> layers,
            StateInput stateInput = StateInput::runningPrediction)
        : m_inputScaler(std::move(inputScaler)), m_outputScaler(std::move(outputScaler)), m_layers(std::move(layers)),
          m_stateInput(stateInput)
    {
        if (m_layers.empty())
            throw InvalidInput("Network: at least one layer is needed");
        for (std::size_t l = 0; l < m_layers.size(); ++l) {
            checkLayer(l);
            std::vector<Kernel> kernels;
            Index column = 0;
            for (const auto& group : m_layers[l].groups) {
                kernels.push_back(makeKernel(m_layers[l], group, column));
                column += group.featureCount();
            }
            m_kernels.push_back(std::move(kernels));
        }
    }

    /// A shallow network: one layer on the inputs.
    Network(InputScaler inputScaler, OutputScaler outputScaler, Layer layer)
        : Network(std::move(inputScaler), std::move(outputScaler), std::vector<Layer>{std::move(layer)})
    {
    }

    Index inputCount() const { return m_inputScaler.inputCount(); }
    Index outputCount() const { return m_outputScaler.outputCount(); }
    /// Residual layers after the initial one (0 for a shallow network).
    Index residualLayerCount() const { return Index(m_layers.size()) - 1; }
    /// Parameter rows (frequencies, ridge directions) over all layers and groups.
    Index width() const
    {
        Index total = 0;
        for (const auto& layer : m_layers)
            total += layer.width();
        return total;
    }

    const InputScaler& inputScaler() const { return m_inputScaler; }
    const OutputScaler& outputScaler() const { return m_outputScaler; }
    const std::vector<Layer>& layers() const { return m_layers; }
    /// The initial layer, f0.
    const Layer& layer() const { return m_layers.front(); }
    StateInput stateInput() const { return m_stateInput; }

    /// Where the training inputs lay (empty for a hand-built network).
    const TrainingDomain& domain() const { return m_domain; }
    void setDomain(TrainingDomain domain)
    {
        if (!domain.empty() && domain.inputCount() != inputCount())
            throw InvalidInput("Network::setDomain: the domain has " + std::to_string(domain.inputCount()) +
                               " inputs, the network " + std::to_string(inputCount()));
        m_domain = std::move(domain);
    }
    /// Names, held-out metrics, settings and training curve; not used in evaluation.
    const ModelRecord& record() const { return m_record; }
    void setRecord(ModelRecord record) { m_record = std::move(record); }

    /// One point, and whether x lies outside the training box (always false
    /// without a domain). Same cost as evaluate plus d comparisons.
    bool evaluateChecked(const double* x, double* y) const
    {
        evaluate(x, y);
        return !m_domain.empty() && m_domain.outsideBox(x);
    }

    /// One point with its Jacobian: y = f(x) (outputCount() values) and
    /// jacobian[o * inputCount() + j] = d y_o / d x_j (row-major m x d),
    /// analytic through the scaler and every layer of the recursion.
    void evaluateWithJacobian(const double* x, double* y, double* jacobian) const
    {
        const Index d = inputCount(), m = outputCount();
        const Eigen::Map<const Vector> point(x, d);
        Vector f0 = Vector::Zero(m), z = Vector::Zero(m), s(m);
        Matrix jf0 = Matrix::Zero(m, d), jz = Matrix::Zero(m, d), js(m, d);
        const Matrix identity = Matrix::Identity(d, d);
        for (const auto& kernel : m_kernels.front())
            accumulateWithJacobian(kernel, point, identity, f0, jf0);
        for (std::size_t l = 1; l < m_layers.size(); ++l) {
            const bool prediction = m_stateInput == StateInput::runningPrediction;
            s = prediction ? Vector(f0 + z) : z;
            js = prediction ? Matrix(jf0 + jz) : jz;
            for (const auto& kernel : m_kernels[l]) {
                if (kernel.source == FeatureSource::input)
                    accumulateWithJacobian(kernel, point, identity, z, jz);
                else
                    accumulateWithJacobian(kernel, s, js, z, jz);
            }
        }
        const auto& deviation = m_outputScaler.deviation();
        Eigen::Map<Vector>(y, m) = m_outputScaler.mean() + deviation.cwiseProduct(f0 + z);
        Eigen::Map<Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>>(jacobian, m, d) =
            deviation.asDiagonal() * (jf0 + jz);
    }

    /// One point: reads inputCount() values at x, writes outputCount() at y.
    /// No checks, and no allocation up to maxStackOutputs outputs.
    void evaluate(const double* x, double* y) const
    {
        const Index m = outputCount();
        if (m <= maxStackOutputs) {
            std::array<double, 2 * maxStackOutputs> scratch;
            evaluate(x, y, scratch.data());
        } else {
            std::vector<double> scratch(static_cast<std::size_t>(2 * m));
            evaluate(x, y, scratch.data());
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
        const Index m = outputCount();
        Matrix outputs(points, m);
        // Row blocks bound the scratch memory whatever N is.
        const Index block = std::min<Index>(256, std::max<Index>(points, 1));
        Index widest = 0;
        for (const auto& kernels : m_kernels)
            for (const auto& kernel : kernels)
                widest = std::max(widest, kernel.amplitudes.rows());
        Matrix features(block, widest), initial(block, m), residual(block, m), state(block, m);
        for (Index r0 = 0; r0 < points; r0 += block) {
            const Index n = std::min(block, points - r0);
            const auto x = inputs.middleRows(r0, n);
            auto f0 = initial.topRows(n);
            auto z = residual.topRows(n);
            auto s = state.topRows(n);
            f0.setZero();
            for (const auto& kernel : m_kernels.front())
                accumulateBatch(kernel, x, features, f0);
            z.setZero();
            for (std::size_t l = 1; l < m_layers.size(); ++l) {
                if (m_stateInput == StateInput::runningPrediction)
                    s = f0 + z;
                else
                    s = z;
                for (const auto& kernel : m_kernels[l])
                    accumulateBatch(kernel, kernel.source == FeatureSource::input ? MatrixView(x) : MatrixView(s),
                                    features, z);
            }
            auto out = outputs.middleRows(r0, n);
            out = ((f0 + z) * m_outputScaler.deviation().asDiagonal()).rowwise() + m_outputScaler.mean().transpose();
        }
        return outputs;
    }

private:
    /// A group laid out for evaluation. Input groups read unscaled x:
    /// angle_k = (w_k * scale) . x + (w_k . offset + c_k); state groups read
    /// s as is: angle_k = v_k . s + c_k. Amplitudes stay in standardised units.
    struct Kernel {
        FeatureKind kind;
        FeatureSource source;
        Matrix slopes;      // K x (d or m)
        Vector phase;       // K
        Matrix amplitudes;  // featuresPerParameter * K x m
    };

    void checkLayer(std::size_t l) const
    {
        const Layer& layer = m_layers[l];
        const Index d = inputCount(), m = outputCount();
        const std::string where = "Network: layer " + std::to_string(l);
        for (const auto& group : layer.groups) {
            if (l == 0 && group.source == FeatureSource::state)
                throw InvalidInput(where + " (the initial layer) has a group that reads the state");
            const Index sourceCount = group.source == FeatureSource::input ? d : m;
            if (group.parameters.cols() != parameterSize(group.kind, sourceCount))
                throw InvalidInput(where + ": a " + featureKindName(group.kind) + " group has " +
                                   std::to_string(group.parameters.cols()) + " parameters per row, expected " +
                                   std::to_string(parameterSize(group.kind, sourceCount)));
        }
        if (layer.amplitudes.rows() != layer.featureCount() || layer.amplitudes.cols() != m)
            throw InvalidInput(where + ": amplitudes are " + std::to_string(layer.amplitudes.rows()) + " x " +
                               std::to_string(layer.amplitudes.cols()) + ", expected " +
                               std::to_string(layer.featureCount()) + " features x " + std::to_string(m) +
                               " outputs");
    }

    /// `column`: the group's first feature column in `layer`.
    Kernel makeKernel(const Layer& layer, const FeatureGroup& group, Index column) const
    {
        const Index sourceCount = group.source == FeatureSource::input ? inputCount() : outputCount();
        const auto slopes = group.parameters.leftCols(sourceCount);
        Kernel kernel{group.kind, group.source, slopes, Vector::Zero(group.width()),
                      layer.amplitudes.middleRows(column, group.featureCount())};
        if (group.source == FeatureSource::input) {
            kernel.slopes = slopes * m_inputScaler.scale().asDiagonal();
            kernel.phase = slopes * m_inputScaler.offset();
        }
        if (group.parameters.cols() > sourceCount)
            kernel.phase += group.parameters.col(sourceCount);
        return kernel;
    }

    /// scratch: 2m doubles for f0 and z.
    void evaluate(const double* x, double* y, double* scratch) const noexcept
    {
        const Index m = outputCount();
        double* f0 = scratch;
        double* z = scratch + m;
        std::fill(f0, f0 + 2 * m, 0.0);
        for (const auto& kernel : m_kernels.front())
            accumulatePoint(kernel, x, f0);
        for (std::size_t l = 1; l < m_layers.size(); ++l) {
            // y holds s_l while layer l adds to z.
            for (Index o = 0; o < m; ++o)
                y[o] = m_stateInput == StateInput::runningPrediction ? f0[o] + z[o] : z[o];
            for (const auto& kernel : m_kernels[l])
                accumulatePoint(kernel, kernel.source == FeatureSource::input ? x : y, z);
        }
        for (Index o = 0; o < m; ++o)
            y[o] = m_outputScaler.mean()[o] + m_outputScaler.deviation()[o] * (f0[o] + z[o]);
    }

    static void accumulatePoint(const Kernel& kernel, const double* source, double* y) noexcept
    {
        withFeatureMap(kernel.kind, [&](auto map) { accumulatePoint<decltype(map)>(kernel, source, y); });
    }

    template <class Map>
    static void accumulatePoint(const Kernel& kernel, const double* source, double* y) noexcept
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
                const double xj = source[j];
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

    /// out += features(source) * amplitudes and jacobian += d out / d x, where
    /// sourceJacobian = d source / d x (identity for the inputs: the scaler is
    /// folded into the slopes).
    static void accumulateWithJacobian(const Kernel& kernel, const Vector& source, const Matrix& sourceJacobian,
                                       Vector& out, Matrix& jacobian)
    {
        const Index width = kernel.slopes.rows();
        Vector first = kernel.slopes * source + kernel.phase, second(width), dFirst(width), dSecond(width);
        withFeatureMap(kernel.kind, [&](auto map) {
            using Map = decltype(map);
            Map::activate(first.data(), second.data(), width);
            Map::slope(first.data(), second.data(), dFirst.data(), dSecond.data(), width);
            const auto b = kernel.amplitudes.topRows(width);
            out.noalias() += b.transpose() * first;
            // d out / d angle (m x K), then through the slopes and the source.
            Matrix weights = b.transpose() * dFirst.asDiagonal();
            if constexpr (Map::featuresPerParameter == 2) {
                const auto b2 = kernel.amplitudes.middleRows(width, width);
                out.noalias() += b2.transpose() * second;
                weights.noalias() += b2.transpose() * dSecond.asDiagonal();
            }
            jacobian.noalias() += weights * kernel.slopes * sourceJacobian;
        });
    }

    static void accumulateBatch(const Kernel& kernel, const MatrixView& source, Matrix& scratch,
                                Eigen::Ref<Matrix> out)
    {
        const Index n = source.rows();
        const Index width = kernel.slopes.rows();
        auto features = scratch.block(0, 0, n, kernel.amplitudes.rows());
        auto angles = features.leftCols(width);
        angles.noalias() = source * kernel.slopes.transpose();
        angles.rowwise() += kernel.phase.transpose();
        withFeatureMap(kernel.kind, [&](auto map) {
            using Map = decltype(map);
            for (Index k = 0; k < width; ++k)
                Map::activate(&features(0, k), Map::featuresPerParameter > 1 ? &features(0, width + k) : nullptr, n);
        });
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
    std::vector<Layer> m_layers;
    StateInput m_stateInput = StateInput::runningPrediction;
    TrainingDomain m_domain;
    ModelRecord m_record;
    std::vector<std::vector<Kernel>> m_kernels;  // derived from the above: one per group, per layer
};

}  // namespace wavestack
