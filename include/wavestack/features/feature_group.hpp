#pragma once
/// \file
/// A feature group: K parameter rows of one feature map. A layer holds one
/// group per map it uses. This header is the one place that turns a map's
/// kind into calls of its policy class; samplers, solvers and trainers only
/// see parameter rows and feature columns.

#include "wavestack/core/types.hpp"
#include "wavestack/features/fourier_map.hpp"
#include "wavestack/features/ridge_map.hpp"

namespace wavestack {

enum class FeatureKind {
    fourier,  ///< (cos(w . u), sin(w . u)), see FourierMap
    ridge,    ///< tanh(w . u + c), see RidgeMap
};

/// What a group's features read: the scaled input u, or the state s of a
/// residual network (see model/network.hpp).
enum class FeatureSource { input, state };

inline const char* featureKindName(FeatureKind kind) { return kind == FeatureKind::fourier ? "fourier" : "ridge"; }

/// Calls `action` with the policy class of `kind` (as a value of that type).
template <class Action>
decltype(auto) withFeatureMap(FeatureKind kind, Action&& action)
{
    if (kind == FeatureKind::fourier)
        return action(FourierMap{});
    return action(RidgeMap{});
}

inline Index featuresPerParameter(FeatureKind kind)
{
    return withFeatureMap(kind, [](auto map) { return decltype(map)::featuresPerParameter; });
}

/// Length of a parameter row for a group of `kind` reading `sourceCount` values.
inline Index parameterSize(FeatureKind kind, Index sourceCount)
{
    return withFeatureMap(kind, [&](auto map) { return sourceCount + (decltype(map)::hasOffset ? 1 : 0); });
}

struct FeatureGroup {
    FeatureKind kind = FeatureKind::fourier;
    /// K x parameterSize(kind, source dimension); row k parameterises feature k.
    Matrix parameters;
    FeatureSource source = FeatureSource::input;

    Index width() const { return parameters.rows(); }
    Index featureCount() const { return featuresPerParameter(kind) * width(); }

    /// Fills phi (N x featureCount()) from the group's source: `inputs`
    /// (N x d, scaled) or `state` (N x m). Feature column f * K + k belongs
    /// to parameter row k (f < featuresPerParameter).
    void features(const MatrixView& inputs, const MatrixView& state, Eigen::Ref<Matrix> phi) const
    {
        features(source == FeatureSource::input ? inputs : state, phi);
    }

    /// Fills phi (N x featureCount()) from the values the group reads (N x source dimension).
    void features(const MatrixView& inputs, Eigen::Ref<Matrix> phi) const
    {
        const Index d = inputs.cols();
        const Index k = width();
        const Index n = inputs.rows();
        auto angles = phi.leftCols(k);
        angles.noalias() = inputs * parameters.leftCols(d).transpose();
        if (parameters.cols() > d)
            angles.rowwise() += parameters.col(d).transpose();
        withFeatureMap(kind, [&](auto map) {
            for (Index j = 0; j < k; ++j)  // columns are contiguous: one kernel call each
                decltype(map)::activate(&phi(0, j), decltype(map)::featuresPerParameter > 1 ? &phi(0, k + j) : nullptr,
                                        n);
        });
    }
};

}  // namespace wavestack
