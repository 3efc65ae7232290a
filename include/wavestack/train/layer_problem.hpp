#pragma once
/// \file
/// One layer's training problem, as samplers see it.
///
/// The problem owns the scaled data, the feature buffers and the layer
/// solver. A sampler hands it parameter rows (feature groups) and gets back
/// the amplitude norms |b_k|, the training error and, when a validation split
/// exists, the held-out error; it never sees the data or the feature map.

#include <cmath>
#include <functional>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/features/feature_group.hpp"
#include "wavestack/model/layer.hpp"
#include "wavestack/parallel/reduction.hpp"

namespace wavestack {

/// Which map and how many parameter rows one feature group of a layer has.
struct GroupShape {
    FeatureKind kind = FeatureKind::fourier;
    Index width = 0;
    FeatureSource source = FeatureSource::input;
};

/// What a sampler reports after each of its iterations.
struct SamplerProgress {
    Index iteration = 0;           ///< 0 is the initial draw
    Index iterations = 0;          ///< planned iterations
    double acceptanceRate = 0.0;   ///< fraction of parameter rows accepted this iteration
    double step = 0.0;             ///< proposal step delta after this iteration's adaptation
    double trainingRmse = 0.0;     ///< standardised units
    double validationRmse = -1.0;  ///< standardised units; -1 without a validation split
};

/// `Solver` follows the solver contract of solve/ridge_solver.hpp and
/// provides `reduction()`, used here to build feature rows in parallel.
template <class Solver>
class LayerProblem {
public:
    using Progress = std::function<bool(const SamplerProgress&)>;

    /// inputs: N x d scaled; targets: N x m (standardised residuals).
    LayerProblem(Matrix inputs, Matrix targets, double lambda, Solver solver = Solver())
        : m_inputs(std::move(inputs)), m_targets(std::move(targets)), m_lambda(lambda), m_solver(std::move(solver)),
          m_state(m_inputs.rows(), 0),  // no state until setState: the initial layer reads inputs only
          m_interceptGroup{FeatureKind::ridge, Matrix::Zero(1, m_inputs.cols() + 1), FeatureSource::input}
    {
        m_interceptGroup.parameters(0, m_inputs.cols()) = 1.0;
    }

    /// Held-out rows that choose between snapshots; never used in a solve.
    void setValidation(Matrix inputs, Matrix targets)
    {
        m_validationInputs = std::move(inputs);
        m_validationTargets = std::move(targets);
        m_validationState.resize(m_validationInputs.rows(), m_state.cols());
    }

    /// The residual network's state on the training and validation rows
    /// (N x m each), read by groups whose source is FeatureSource::state.
    void setState(Matrix state, Matrix validationState)
    {
        m_state = std::move(state);
        m_validationState = std::move(validationState);
    }

    /// With `on`, every solve adds interceptGroup()'s constant column after
    /// the sampled groups' columns; samplers never see or move it.
    void setIntercept(bool on) { m_intercept = on; }
    bool hasIntercept() const { return m_intercept; }

    /// A ridge row with zero slopes: tanh(0 . u + 1), the same value at every
    /// point, so its amplitude is the layer's constant term.
    const FeatureGroup& interceptGroup() const { return m_interceptGroup; }

    /// Called by samplers after every iteration; returning false cancels.
    void setProgress(Progress progress) { m_progress = std::move(progress); }

    Index inputCount() const { return m_inputs.cols(); }
    Index stateCount() const { return m_state.cols(); }

    /// Length of a parameter row of a group of this shape.
    Index parameterSize(const GroupShape& shape) const
    {
        return wavestack::parameterSize(shape.kind,
                                        shape.source == FeatureSource::input ? inputCount() : stateCount());
    }
    bool hasValidation() const { return m_validationInputs.rows() > 0; }
    double lambda() const { return m_lambda; }
    Solver& solver() { return m_solver; }

    /// Features of `groups` on the training rows, amplitudes by the solver
    /// with the problem's lambda; returns |b_k| per parameter row over all
    /// groups. Buffers are reused.
    const Vector& solve(const std::vector<FeatureGroup>& groups) { return solve(groups, m_lambda); }

    /// The same with another lambda (samplers may regularise their chain more).
    const Vector& solve(const std::vector<FeatureGroup>& groups, double lambda)
    {
        fillFeatures(groups, m_inputs, m_state, m_features);
        m_solver.solve(m_features, m_targets, lambda, m_amplitudes);
        m_norms = Layer::amplitudeNorms(groups, m_amplitudes);
        return m_norms;
    }

    /// Amplitudes of the last solve (featureCount x m).
    const Matrix& amplitudes() const { return m_amplitudes; }

    /// Phi B of the last solve on the training rows (N x m).
    const Matrix& fitted()
    {
        m_fitted.noalias() = m_features * m_amplitudes;
        return m_fitted;
    }

    /// `groups` with the last solve's amplitudes on the validation rows.
    const Matrix& validationFitted(const std::vector<FeatureGroup>& groups)
    {
        fillFeatures(groups, m_validationInputs, m_validationState, m_validationFeatures);
        m_validationFitted.noalias() = m_validationFeatures * m_amplitudes;
        return m_validationFitted;
    }

    /// RMSE of the last solve on the training rows, standardised units.
    double trainingRmse()
    {
        return std::sqrt((fitted() - m_targets).squaredNorm() / static_cast<double>(m_targets.size()));
    }

    /// RMSE of `groups` with the last solve's amplitudes on the validation rows.
    double validationRmse(const std::vector<FeatureGroup>& groups)
    {
        return std::sqrt((validationFitted(groups) - m_validationTargets).squaredNorm() /
                         static_cast<double>(m_validationTargets.size()));
    }

    /// Forwards to the progress callback; throws Cancelled when it says stop.
    void report(const SamplerProgress& progress) const
    {
        if (m_progress && !m_progress(progress))
            throw Cancelled("training cancelled by the progress callback at sampler iteration " +
                            std::to_string(progress.iteration));
    }

private:
    void fillFeatures(const std::vector<FeatureGroup>& groups, const Matrix& inputs, const Matrix& state,
                      Matrix& features)
    {
        Index count = 0;
        for (const auto& group : groups)
            count += group.featureCount();
        features.resize(inputs.rows(), count + (m_intercept ? 1 : 0));  // no reallocation when the shape repeats
        const RowBlocks blocks(inputs.rows(), 256, 64);
        m_solver.reduction().run(blocks.count, [&](Index b) {
            const Index begin = blocks.begin(b), size = blocks.size(b);
            auto rows = features.middleRows(begin, size);
            layerFeatures(groups, inputs.middleRows(begin, size), state.middleRows(begin, size), rows.leftCols(count));
            if (m_intercept)
                m_interceptGroup.features(inputs.middleRows(begin, size), rows.rightCols(1));
        });
    }

    Matrix m_inputs;
    Matrix m_targets;
    double m_lambda;
    Solver m_solver;
    Matrix m_state;
    Matrix m_validationInputs;
    Matrix m_validationTargets;
    Matrix m_validationState;
    Progress m_progress;
    FeatureGroup m_interceptGroup;
    bool m_intercept = false;

    Matrix m_features;
    Matrix m_amplitudes;
    Vector m_norms;
    Matrix m_fitted;
    Matrix m_validationFeatures;
    Matrix m_validationFitted;
};

}  // namespace wavestack
