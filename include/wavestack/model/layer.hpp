#pragma once
/// \file
/// Parameters of one layer: feature groups and the amplitudes of their features.

#include <vector>

#include "wavestack/core/types.hpp"
#include "wavestack/features/feature_group.hpp"

namespace wavestack {

/// Fills phi (N x sum of featureCount()) with the features of `groups`
/// side by side, in group order, from scaled inputs (N x d) and, for groups
/// that read it, the residual network's state (N x m; may be N x 0).
inline void layerFeatures(const std::vector<FeatureGroup>& groups, const MatrixView& inputs, const MatrixView& state,
                          Eigen::Ref<Matrix> phi)
{
    Index column = 0;
    for (const auto& group : groups) {
        group.features(inputs, state, phi.middleCols(column, group.featureCount()));
        column += group.featureCount();
    }
}

/// The layer's features are the groups' feature columns side by side, in
/// group order; `amplitudes` has one row per feature column and one column
/// per output, in standardised output units.
struct Layer {
    std::vector<FeatureGroup> groups;
    Matrix amplitudes;

    Index featureCount() const
    {
        Index count = 0;
        for (const auto& group : groups)
            count += group.featureCount();
        return count;
    }

    /// Number of parameter rows over all groups.
    Index width() const
    {
        Index count = 0;
        for (const auto& group : groups)
            count += group.width();
        return count;
    }

    /// Fills the N x featureCount() feature matrix of the whole layer.
    void features(const MatrixView& inputs, const MatrixView& state, Eigen::Ref<Matrix> phi) const
    {
        layerFeatures(groups, inputs, state, phi);
    }

    /// |b_k| for every parameter row k over all groups: the Euclidean norm of
    /// all amplitudes of row k's features over all outputs.
    Vector amplitudeNorms() const { return amplitudeNorms(groups, amplitudes); }

    static Vector amplitudeNorms(const std::vector<FeatureGroup>& groups, const Matrix& amplitudes)
    {
        Index total = 0;
        for (const auto& group : groups)
            total += group.width();
        Vector norms = Vector::Zero(total);
        Index row = 0, column = 0;
        for (const auto& group : groups) {
            const Index k = group.width();
            for (Index f = 0; f < featuresPerParameter(group.kind); ++f)
                norms.segment(row, k) += amplitudes.middleRows(column + f * k, k).rowwise().squaredNorm();
            row += k;
            column += group.featureCount();
        }
        return norms.cwiseSqrt();
    }
};

}  // namespace wavestack
