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
#include "wavestack/model/evaluator.hpp"
#include "wavestack/model/kernel_term.hpp"
#include "wavestack/model/layer.hpp"
#include "wavestack/model/record.hpp"
#include "wavestack/model/scaler.hpp"

namespace wavestack {

/// A deep residual network of feature layers (Kammonen et al., "Smaller
/// generalization error derived for a deep residual neural network compared
/// to shallow networks", 2020/2023), in standardised output units:
///
///     f0     = sum_k b_0k . phi(w_0k . u)                      (layer 0, inputs only)
///     z_0    = 0
///     z_l+1  = z_l + sum_k b_lk . phi(w_lk . u) + sum_k c_lk . phi(v_lk . s_l)
///     f(x)   = mean + deviation * (f0 + z_L) [+ t(x)],   u = S(x)
///
/// with s_l chosen by StateInput. A shallow network is the case of one layer.
/// The optional kernel term t (model/kernel_term.hpp) is added in the user's
/// units; the layers then model what it leaves.
class Network {
public:
    Network() = default;

    Network(InputScaler inputScaler, OutputScaler outputScaler, std::vector<Layer> layers,
            StateInput stateInput = StateInput::runningPrediction)
        : m_inputScaler(std::move(inputScaler)), m_outputScaler(std::move(outputScaler)), m_layers(std::move(layers)),
          m_stateInput(stateInput)
    {
        if (m_layers.empty())
            throw InvalidInput("Network: at least one layer is needed");
        for (std::size_t l = 0; l < m_layers.size(); ++l)
            checkLayer(l);
        m_evaluator = Evaluator<double>(m_inputScaler, m_outputScaler, m_layers, m_stateInput);
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

    /// The additive kernel term (empty unless set).
    const KernelTerm& kernelTerm() const { return m_term; }
    /// Adds `term` to the network's output (replacing any earlier one); an
    /// empty term removes it. Throws InvalidInput when it does not fit.
    void setKernelTerm(KernelTerm term)
    {
        term.check(inputCount(), outputCount(), "Network::setKernelTerm");
        m_term = std::move(term);
        m_evaluator = Evaluator<double>(m_inputScaler, m_outputScaler, m_layers, m_stateInput, m_term);
        m_termEvaluator = detail::KernelTermEvaluator(m_term);
    }

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
        const auto& kernels = m_evaluator.kernels();
        for (const auto& kernel : kernels.front())
            accumulateWithJacobian(kernel, point, identity, f0, jf0);
        for (std::size_t l = 1; l < m_layers.size(); ++l) {
            const bool prediction = m_stateInput == StateInput::runningPrediction;
            s = prediction ? Vector(f0 + z) : z;
            js = prediction ? Matrix(jf0 + jz) : jz;
            for (const auto& kernel : kernels[l]) {
                if (kernel.source == FeatureSource::input)
                    accumulateWithJacobian(kernel, point, identity, z, jz);
                else
                    accumulateWithJacobian(kernel, s, js, z, jz);
            }
        }
        const auto& deviation = m_outputScaler.deviation();
        Vector value = m_outputScaler.mean() + deviation.cwiseProduct(f0 + z);
        Matrix total = deviation.asDiagonal() * (jf0 + jz);
        m_termEvaluator.addWithJacobian(point, value, total);
        Eigen::Map<Vector>(y, m) = value;
        Eigen::Map<Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>>(jacobian, m, d) = total;
    }

    /// One point: reads inputCount() values at x, writes outputCount() at y.
    /// No checks, and no allocation up to maxStackOutputs outputs.
    void evaluate(const double* x, double* y) const { m_evaluator.evaluate(x, y); }

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
        return m_evaluator.evaluateBatch(inputs);
    }

    /// The kernels in double, for evaluation code that needs them.
    const Evaluator<double>& evaluator() const { return m_evaluator; }

private:
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

    /// out += features(source) * amplitudes and jacobian += d out / d x, where
    /// sourceJacobian = d source / d x (identity for the inputs: the scaler is
    /// folded into the slopes).
    static void accumulateWithJacobian(const detail::Kernel<double>& kernel, const Vector& source,
                                       const Matrix& sourceJacobian,
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
    KernelTerm m_term;
    Evaluator<double> m_evaluator;  // derived from the above
    detail::KernelTermEvaluator m_termEvaluator;  // for the Jacobian
};

}  // namespace wavestack
