#pragma once
/// \file
/// Loss and analytic gradient of a residual network with respect to every
/// parameter (frequencies w, v, ridge offsets c, amplitudes b), by reverse
/// mode through the z recursion. Works in the network's internal units:
/// scaled inputs u and standardised outputs.
///
///     loss = (1/n) sum_i |f(u_i) - y_i|^2 + lambda sum |amplitudes|^2
///
/// (the data term summed over outputs). No finite differences anywhere.

#include <vector>

#include "wavestack/core/types.hpp"
#include "wavestack/features/feature_group.hpp"
#include "wavestack/model/layer.hpp"
#include "wavestack/model/network.hpp"
#include "wavestack/parallel/reduction.hpp"

namespace wavestack {

/// Gradients shaped like the layers: one matrix per group's parameters and
/// one per layer's amplitudes.
struct LayerGradient {
    std::vector<Matrix> parameters;
    Matrix amplitudes;
};
using NetworkGradient = std::vector<LayerGradient>;

namespace detail {

/// Scratch of one row block, kept between calls so tuning steps reuse it.
struct BlockBuffers {
    std::vector<Matrix> features, states;
    Matrix initial, residual, error, gradZ, gradInitial, gradFeatures, gradState, gradAngles;
    Vector slope1, slope2;
};

/// Sets `gradient` to zeros shaped like `layers`, reusing its memory.
inline void resetGradient(const std::vector<Layer>& layers, NetworkGradient& gradient)
{
    gradient.resize(layers.size());
    for (std::size_t l = 0; l < layers.size(); ++l) {
        gradient[l].parameters.resize(layers[l].groups.size());
        for (std::size_t g = 0; g < layers[l].groups.size(); ++g)
            gradient[l].parameters[g].setZero(layers[l].groups[g].parameters.rows(),
                                              layers[l].groups[g].parameters.cols());
        gradient[l].amplitudes.setZero(layers[l].amplitudes.rows(), layers[l].amplitudes.cols());
    }
}

/// Data-term sum of squared errors over rows of one block, and its gradient
/// (not divided by n) added to `gradient`.
inline double accumulateBlockGradient(const std::vector<Layer>& layers, StateInput stateInput, const MatrixView& u,
                                      const MatrixView& y, NetworkGradient& gradient, BlockBuffers& b)
{
    const Index n = u.rows(), m = y.cols();
    const std::size_t count = layers.size();
    // Forward: features per layer and the state each residual layer read.
    b.features.resize(count);
    b.states.resize(count);
    b.initial.setZero(n, m);
    b.residual.setZero(n, m);
    for (std::size_t l = 0; l < count; ++l) {
        if (l == 0)
            b.states[l].resize(n, 0);
        else if (stateInput == StateInput::runningPrediction)
            b.states[l] = b.initial + b.residual;
        else
            b.states[l] = b.residual;
        b.features[l].resize(n, layers[l].featureCount());
        layerFeatures(layers[l].groups, u, b.states[l], b.features[l]);
        (l == 0 ? b.initial : b.residual).noalias() += b.features[l] * layers[l].amplitudes;
    }
    b.error = b.initial + b.residual - y;

    // Backward: dL/dz flows down the residual connections; state groups add
    // their input gradient to z (and to f0 when they read f0 + z).
    b.gradZ = 2.0 * b.error;
    b.gradInitial = b.gradZ;
    b.slope1.resize(n);
    b.slope2.resize(n);
    for (std::size_t l = count; l-- > 0;) {
        const Layer& layer = layers[l];
        const Matrix& upstream = l == 0 ? b.gradInitial : b.gradZ;
        const Matrix& features = b.features[l];
        gradient[l].amplitudes.noalias() += features.transpose() * upstream;
        b.gradFeatures.noalias() = upstream * layer.amplitudes.transpose();  // n x P
        b.gradState.setZero(n, l == 0 ? 0 : m);
        Index column = 0;
        for (std::size_t g = 0; g < layer.groups.size(); ++g) {
            const FeatureGroup& group = layer.groups[g];
            const Index k = group.width();
            b.gradAngles.resize(n, k);
            withFeatureMap(group.kind, [&](auto map) {
                using Map = decltype(map);
                for (Index j = 0; j < k; ++j) {
                    const double* first = &features(0, column + j);
                    const double* second = Map::featuresPerParameter > 1 ? &features(0, column + k + j) : nullptr;
                    Map::slope(first, second, b.slope1.data(), b.slope2.data(), n);
                    b.gradAngles.col(j) = b.gradFeatures.col(column + j).cwiseProduct(b.slope1);
                    if constexpr (Map::featuresPerParameter > 1)
                        b.gradAngles.col(j) += b.gradFeatures.col(column + k + j).cwiseProduct(b.slope2);
                }
            });
            const MatrixView source = group.source == FeatureSource::input ? u : MatrixView(b.states[l]);
            const Index sourceCount = source.cols();
            gradient[l].parameters[g].leftCols(sourceCount).noalias() += b.gradAngles.transpose() * source;
            if (group.parameters.cols() > sourceCount)
                gradient[l].parameters[g].col(sourceCount) += b.gradAngles.colwise().sum().transpose();
            if (group.source == FeatureSource::state)
                b.gradState.noalias() += b.gradAngles * group.parameters.leftCols(sourceCount);
            column += group.featureCount();
        }
        if (l > 0) {
            // Layer l read s_l = z_l (+ f0): its state gradient joins dL/dz_l.
            b.gradZ += b.gradState;
            if (stateInput == StateInput::runningPrediction)
                b.gradInitial += b.gradState;
        }
    }
    return b.error.squaredNorm();
}

}  // namespace detail

/// Buffers of lossAndGradient, kept by a caller that computes many
/// gradients of the same shape (the tuner's mini-batches): nothing is
/// reallocated from one step to the next.
struct GradientWorkspace {
    std::vector<NetworkGradient> partial;  // one per row block
    std::vector<double> squared;
    std::vector<detail::BlockBuffers> blocks;
};

/// Loss of `layers` on (u, y) and its gradient (overwritten). Rows are cut
/// into fixed blocks whose partial gradients are summed in block order, so
/// the result is the same for every worker count.
template <class Reduction>
double lossAndGradient(const std::vector<Layer>& layers, StateInput stateInput, const MatrixView& u,
                       const MatrixView& y, double lambda, NetworkGradient& gradient, const Reduction& reduction,
                       GradientWorkspace& workspace)
{
    const RowBlocks blocks(u.rows(), 256, 64);
    const auto count = static_cast<std::size_t>(blocks.count);
    workspace.partial.resize(count);
    workspace.squared.assign(count, 0.0);
    workspace.blocks.resize(count);
    reduction.run(blocks.count, [&](Index b) {
        const auto i = std::size_t(b);
        detail::resetGradient(layers, workspace.partial[i]);
        workspace.squared[i] = detail::accumulateBlockGradient(
            layers, stateInput, u.middleRows(blocks.begin(b), blocks.size(b)),
            y.middleRows(blocks.begin(b), blocks.size(b)), workspace.partial[i], workspace.blocks[i]);
    });
    const double scale = 1.0 / double(u.rows());
    detail::resetGradient(layers, gradient);
    double loss = 0.0;
    for (std::size_t b = 0; b < count; ++b) {
        loss += workspace.squared[b];
        for (std::size_t l = 0; l < layers.size(); ++l) {
            for (std::size_t g = 0; g < layers[l].groups.size(); ++g)
                gradient[l].parameters[g] += workspace.partial[b][l].parameters[g];
            gradient[l].amplitudes += workspace.partial[b][l].amplitudes;
        }
    }
    loss *= scale;
    for (std::size_t l = 0; l < layers.size(); ++l) {
        for (auto& p : gradient[l].parameters)
            p *= scale;
        gradient[l].amplitudes *= scale;
        gradient[l].amplitudes += 2.0 * lambda * layers[l].amplitudes;
        loss += lambda * layers[l].amplitudes.squaredNorm();
    }
    return loss;
}

/// The same with a workspace of its own (one-off calls, tests).
template <class Reduction>
double lossAndGradient(const std::vector<Layer>& layers, StateInput stateInput, const MatrixView& u,
                       const MatrixView& y, double lambda, NetworkGradient& gradient, const Reduction& reduction)
{
    GradientWorkspace workspace;
    return lossAndGradient(layers, stateInput, u, y, lambda, gradient, reduction, workspace);
}

}  // namespace wavestack
