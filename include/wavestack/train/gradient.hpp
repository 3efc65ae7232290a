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

/// A zero gradient shaped like `layers`.
inline NetworkGradient zeroGradient(const std::vector<Layer>& layers)
{
    NetworkGradient gradient;
    for (const Layer& layer : layers) {
        LayerGradient g;
        for (const FeatureGroup& group : layer.groups)
            g.parameters.push_back(Matrix::Zero(group.parameters.rows(), group.parameters.cols()));
        g.amplitudes = Matrix::Zero(layer.amplitudes.rows(), layer.amplitudes.cols());
        gradient.push_back(std::move(g));
    }
    return gradient;
}

namespace detail {

/// Data-term sum of squared errors over rows of one block, and its gradient
/// (not divided by n) added to `gradient`.
inline double accumulateBlockGradient(const std::vector<Layer>& layers, StateInput stateInput, const MatrixView& u,
                                      const MatrixView& y, NetworkGradient& gradient)
{
    const Index n = u.rows(), m = y.cols();
    const std::size_t count = layers.size();
    // Forward: features per layer and the state each residual layer read.
    std::vector<Matrix> features(count), states(count);
    Matrix initial = Matrix::Zero(n, m), residual = Matrix::Zero(n, m);
    for (std::size_t l = 0; l < count; ++l) {
        states[l] = l == 0 ? Matrix(n, 0)
                           : (stateInput == StateInput::runningPrediction ? Matrix(initial + residual) : residual);
        features[l].resize(n, layers[l].featureCount());
        layerFeatures(layers[l].groups, u, states[l], features[l]);
        (l == 0 ? initial : residual).noalias() += features[l] * layers[l].amplitudes;
    }
    const Matrix error = initial + residual - y;

    // Backward: dL/dz flows down the residual connections; state groups add
    // their input gradient to z (and to f0 when they read f0 + z).
    Matrix gradZ = 2.0 * error, gradInitial = 2.0 * error;
    for (std::size_t l = count; l-- > 0;) {
        const Layer& layer = layers[l];
        const Matrix& upstream = l == 0 ? gradInitial : gradZ;
        gradient[l].amplitudes.noalias() += features[l].transpose() * upstream;
        const Matrix gradFeatures = upstream * layer.amplitudes.transpose();  // n x P
        Matrix gradState = Matrix::Zero(n, l == 0 ? 0 : m);
        Index column = 0;
        for (std::size_t g = 0; g < layer.groups.size(); ++g) {
            const FeatureGroup& group = layer.groups[g];
            const Index k = group.width();
            Matrix gradAngles(n, k);
            withFeatureMap(group.kind, [&](auto map) {
                using Map = decltype(map);
                Vector d1(n), d2(n);
                for (Index j = 0; j < k; ++j) {
                    const double* first = &features[l](0, column + j);
                    const double* second = Map::featuresPerParameter > 1 ? &features[l](0, column + k + j) : nullptr;
                    Map::slope(first, second, d1.data(), d2.data(), n);
                    gradAngles.col(j) = gradFeatures.col(column + j).cwiseProduct(d1);
                    if constexpr (Map::featuresPerParameter > 1)
                        gradAngles.col(j) += gradFeatures.col(column + k + j).cwiseProduct(d2);
                }
            });
            const MatrixView source = group.source == FeatureSource::input ? u : MatrixView(states[l]);
            const Index sourceCount = source.cols();
            gradient[l].parameters[g].leftCols(sourceCount).noalias() += gradAngles.transpose() * source;
            if (group.parameters.cols() > sourceCount)
                gradient[l].parameters[g].col(sourceCount) += gradAngles.colwise().sum().transpose();
            if (group.source == FeatureSource::state)
                gradState.noalias() += gradAngles * group.parameters.leftCols(sourceCount);
            column += group.featureCount();
        }
        if (l > 0) {
            // Layer l read s_l = z_l (+ f0): its state gradient joins dL/dz_l.
            gradZ += gradState;
            if (stateInput == StateInput::runningPrediction)
                gradInitial += gradState;
        }
    }
    return error.squaredNorm();
}

}  // namespace detail

/// Loss of `layers` on (u, y) and its gradient (overwritten). Rows are cut
/// into fixed blocks whose partial gradients are summed in block order, so
/// the result is the same for every worker count.
template <class Reduction>
double lossAndGradient(const std::vector<Layer>& layers, StateInput stateInput, const MatrixView& u,
                       const MatrixView& y, double lambda, NetworkGradient& gradient, const Reduction& reduction)
{
    const RowBlocks blocks(u.rows(), 256, 64);
    std::vector<NetworkGradient> partial(static_cast<std::size_t>(blocks.count), zeroGradient(layers));
    std::vector<double> squared(static_cast<std::size_t>(blocks.count), 0.0);
    reduction.run(blocks.count, [&](Index b) {
        squared[std::size_t(b)] = detail::accumulateBlockGradient(
            layers, stateInput, u.middleRows(blocks.begin(b), blocks.size(b)),
            y.middleRows(blocks.begin(b), blocks.size(b)), partial[std::size_t(b)]);
    });
    const double scale = 1.0 / double(u.rows());
    gradient = zeroGradient(layers);
    double loss = 0.0;
    for (std::size_t b = 0; b < partial.size(); ++b) {
        loss += squared[b];
        for (std::size_t l = 0; l < layers.size(); ++l) {
            for (std::size_t g = 0; g < layers[l].groups.size(); ++g)
                gradient[l].parameters[g] += partial[b][l].parameters[g];
            gradient[l].amplitudes += partial[b][l].amplitudes;
        }
    }
    loss *= scale;
    for (std::size_t l = 0; l < layers.size(); ++l) {
        for (auto& p : gradient[l].parameters)
            p *= scale;
        gradient[l].amplitudes = scale * gradient[l].amplitudes + 2.0 * lambda * layers[l].amplitudes;
        loss += lambda * layers[l].amplitudes.squaredNorm();
    }
    return loss;
}

}  // namespace wavestack
