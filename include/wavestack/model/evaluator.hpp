#pragma once
/// \file
/// The evaluation kernels of a network, in double or float: parameters laid
/// out for evaluation on unscaled inputs, and the layer recursion for one
/// point (no allocation up to maxStackOutputs outputs) and for a batch.
/// Network holds one in double; FloatNetwork one in float.

#include <algorithm>
#include <array>
#include <type_traits>
#include <vector>

#include "wavestack/core/types.hpp"
#include "wavestack/detail/simd.hpp"
#include "wavestack/features/feature_group.hpp"
#include "wavestack/model/kernel_term.hpp"
#include "wavestack/model/layer.hpp"
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

/// Outputs the single-point path keeps on the stack; more allocate.
constexpr Index maxStackOutputs = 32;
/// Inputs converted to double on the stack by float evaluation paths that
/// need double (a kernel term, FloatNetwork in double); more allocate.
constexpr Index maxStackInputs = 64;

namespace detail {

/// A feature group laid out for evaluation. Input groups read unscaled x:
/// angle_k = (w_k * scale) . x + (w_k . offset + c_k); state groups read s
/// as is: angle_k = v_k . s + c_k. Amplitudes stay in standardised units.
template <class Scalar>
struct Kernel {
    using MatrixS = Eigen::Matrix<Scalar, Eigen::Dynamic, Eigen::Dynamic>;
    using VectorS = Eigen::Matrix<Scalar, Eigen::Dynamic, 1>;
    FeatureKind kind;
    FeatureSource source;
    MatrixS slopes;      // K x (d or m)
    VectorS phase;       // K
    MatrixS amplitudes;  // featuresPerParameter * K x m
};

}  // namespace detail

template <class Scalar>
class Evaluator {
public:
    using MatrixS = Eigen::Matrix<Scalar, Eigen::Dynamic, Eigen::Dynamic>;
    using VectorS = Eigen::Matrix<Scalar, Eigen::Dynamic, 1>;
    using Kernel = detail::Kernel<Scalar>;

    Evaluator() = default;

    /// Folds the input scaler into the input groups and converts to Scalar.
    /// The layers and the term must already be consistent (Network checks
    /// them). The kernel term is evaluated in double whatever Scalar is.
    Evaluator(const InputScaler& inputScaler, const OutputScaler& outputScaler, const std::vector<Layer>& layers,
              StateInput stateInput, const KernelTerm& term = KernelTerm())
        : m_inputCount(inputScaler.inputCount()), m_mean(outputScaler.mean().cast<Scalar>()),
          m_deviation(outputScaler.deviation().cast<Scalar>()), m_stateInput(stateInput), m_term(term)
    {
        for (const Layer& layer : layers) {
            std::vector<Kernel> kernels;
            Index column = 0;
            for (const FeatureGroup& group : layer.groups) {
                const Index sourceCount = group.source == FeatureSource::input ? inputCount() : outputCount();
                const auto slopes = group.parameters.leftCols(sourceCount);
                Matrix folded = slopes;
                Vector phase = Vector::Zero(group.width());
                if (group.source == FeatureSource::input) {
                    folded = slopes * inputScaler.scale().asDiagonal();
                    phase = slopes * inputScaler.offset();
                }
                if (group.parameters.cols() > sourceCount)
                    phase += group.parameters.col(sourceCount);
                kernels.push_back(Kernel{group.kind, group.source, folded.cast<Scalar>(), phase.cast<Scalar>(),
                                         layer.amplitudes.middleRows(column, group.featureCount()).cast<Scalar>()});
                column += group.featureCount();
            }
            m_kernels.push_back(std::move(kernels));
        }
    }

    Index inputCount() const { return m_inputCount; }
    Index outputCount() const { return m_mean.size(); }
    StateInput stateInput() const { return m_stateInput; }
    const std::vector<std::vector<Kernel>>& kernels() const { return m_kernels; }
    const VectorS& mean() const { return m_mean; }
    const VectorS& deviation() const { return m_deviation; }

    /// One point; no checks, no allocation up to maxStackOutputs outputs.
    void evaluate(const Scalar* x, Scalar* y) const
    {
        const Index m = outputCount();
        if (m <= maxStackOutputs) {
            std::array<Scalar, 2 * maxStackOutputs> scratch;
            evaluate(x, y, scratch.data());
        } else {
            std::vector<Scalar> scratch(static_cast<std::size_t>(2 * m));
            evaluate(x, y, scratch.data());
        }
    }

    /// A batch, rows = points (inputCount() columns); N x outputCount().
    MatrixS evaluateBatch(const Eigen::Ref<const MatrixS>& inputs) const
    {
        const Index points = inputs.rows();
        const Index m = outputCount();
        MatrixS outputs(points, m);
        Index widest = 0;
        for (const auto& kernels : m_kernels)
            for (const auto& kernel : kernels)
                widest = std::max(widest, kernel.amplitudes.rows());
        // Row blocks bound the scratch memory whatever N is, and keep the
        // feature block near 512 KiB so it stays in a core's L2 cache between
        // the activation and the amplitude product (measured on an AMD EPYC:
        // 8-11 % faster single-threaded than 2 MiB blocks at K = 512, and 2
        // threads scale better because they stop competing for the shared L3).
        const Index rowsInBudget = (Index(512) << 10) / (std::max<Index>(widest, 1) * Index(sizeof(Scalar)));
        const Index block = std::min(std::clamp<Index>(rowsInBudget / 16 * 16, 32, 256), std::max<Index>(points, 1));
        MatrixS features(block, widest), initial(block, m), residual(block, m), state(block, m);
        Matrix termScratch;
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
            for (std::size_t l = 1; l < m_kernels.size(); ++l) {
                if (m_stateInput == StateInput::runningPrediction)
                    s = f0 + z;
                else
                    s = z;
                for (const auto& kernel : m_kernels[l]) {
                    if (kernel.source == FeatureSource::input)
                        accumulateBatch(kernel, x, features, z);
                    else
                        accumulateBatch(kernel, s, features, z);
                }
            }
            outputs.middleRows(r0, n) = ((f0 + z) * m_deviation.asDiagonal()).rowwise() + m_mean.transpose();
            if (!m_term.empty()) {
                Matrix termValues = Matrix::Zero(n, m);
                m_term.addBatch(x.template cast<double>(), termValues, termScratch);
                outputs.middleRows(r0, n) += termValues.cast<Scalar>();
            }
        }
        return outputs;
    }

private:
    /// scratch: 2m values for f0 and z.
    void evaluate(const Scalar* x, Scalar* y, Scalar* scratch) const noexcept
    {
        const Index m = outputCount();
        Scalar* f0 = scratch;
        Scalar* z = scratch + m;
        std::fill(f0, f0 + 2 * m, Scalar(0));
        for (const auto& kernel : m_kernels.front())
            accumulatePoint(kernel, x, f0);
        for (std::size_t l = 1; l < m_kernels.size(); ++l) {
            // y holds s_l while layer l adds to z.
            for (Index o = 0; o < m; ++o)
                y[o] = m_stateInput == StateInput::runningPrediction ? f0[o] + z[o] : z[o];
            for (const auto& kernel : m_kernels[l])
                accumulatePoint(kernel, kernel.source == FeatureSource::input ? x : y, z);
        }
        for (Index o = 0; o < m; ++o)
            y[o] = m_mean[o] + m_deviation[o] * (f0[o] + z[o]);
        if (!m_term.empty())
            addTerm(x, y);
    }

    void addTerm(const Scalar* x, Scalar* y) const noexcept
    {
        if constexpr (std::is_same_v<Scalar, double>) {
            m_term.addPoint(x, y);
        } else {
            const Index d = inputCount(), m = outputCount();
            if (d > maxStackInputs || m > maxStackOutputs) {
                std::vector<double> in(x, x + d), out(static_cast<std::size_t>(m), 0.0);
                m_term.addPoint(in.data(), out.data());
                for (Index o = 0; o < m; ++o)
                    y[o] += Scalar(out[std::size_t(o)]);
                return;
            }
            std::array<double, maxStackInputs> in;
            std::array<double, maxStackOutputs> out{};
            std::copy(x, x + d, in.begin());
            m_term.addPoint(in.data(), out.data());
            for (Index o = 0; o < m; ++o)
                y[o] += Scalar(out[std::size_t(o)]);
        }
    }

    static void accumulatePoint(const Kernel& kernel, const Scalar* source, Scalar* y) noexcept
    {
        withFeatureMap(kernel.kind, [&](auto map) { accumulatePoint<decltype(map)>(kernel, source, y); });
    }

    template <class Map>
    static void accumulatePoint(const Kernel& kernel, const Scalar* source, Scalar* y) noexcept
    {
        constexpr Index chunk = 128;  // parameter rows per pass, on the stack
        alignas(64) Scalar first[chunk];
        alignas(64) Scalar second[chunk];
        const Index d = kernel.slopes.cols();
        const Index width = kernel.slopes.rows();
        const Index m = kernel.amplitudes.cols();
        for (Index k0 = 0; k0 < width; k0 += chunk) {
            const Index n = std::min(chunk, width - k0);
            const Scalar* phase = kernel.phase.data() + k0;
            std::copy(phase, phase + n, first);
            for (Index j = 0; j < d; ++j) {
                const Scalar xj = source[j];
                const Scalar* w = &kernel.slopes(k0, j);
                for (Index k = 0; k < n; ++k)
                    first[k] += w[k] * xj;
            }
            Map::activate(first, second, n);
            for (Index o = 0; o < m; ++o) {
                const Scalar* b = &kernel.amplitudes(k0, o);
                y[o] += detail::dot(b, first, n);
                if constexpr (Map::featuresPerParameter == 2)
                    y[o] += detail::dot(b + width, second, n);  // the second feature's amplitudes follow K rows later
            }
        }
    }

    template <class Source>
    static void accumulateBatch(const Kernel& kernel, const Source& source, MatrixS& scratch,
                                Eigen::Ref<MatrixS> out)
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
                Map::activate(&features(0, k),
                              Map::featuresPerParameter > 1 ? &features(0, width + k) : static_cast<Scalar*>(nullptr),
                              n);
        });
        out.noalias() += features * kernel.amplitudes;
    }

    Index m_inputCount = 0;
    VectorS m_mean, m_deviation;
    StateInput m_stateInput = StateInput::runningPrediction;
    std::vector<std::vector<Kernel>> m_kernels;  // one per group, per layer
    detail::KernelTermEvaluator m_term;
};

}  // namespace wavestack
