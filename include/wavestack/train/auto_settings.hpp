#pragma once
/// \file
/// Settings chosen from the data instead of by the user, each by held-out
/// error (the rows FitOptions::validationFraction sets aside).

#include <algorithm>
#include <chrono>
#include <cmath>
#include <limits>
#include <vector>

#include "wavestack/core/error.hpp"
#include "wavestack/core/random.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/solve/ridge_loo.hpp"
#include "wavestack/train/fit.hpp"

namespace wavestack {

/// Factor-2 steps from 1/32 to 16, plus the library default (so the choice is
/// never worse on held-out rows than not choosing).
inline std::vector<double> frequencyStddevGrid()
{
    std::vector<double> grid;
    for (double s = 1.0 / 32.0; s <= 16.0; s *= 2.0)
        grid.push_back(s);
    grid.push_back(GaussianSampler::defaultStddev);
    std::sort(grid.begin(), grid.end());
    return grid;
}

namespace detail {

/// Shallow Gaussian-sampled trial fits on (a seeded subset of at most
/// `maxRows` rows of) the data, each scored by its leave-one-out relative
/// RMSE on every row of the subset (solve/ridge_loo.hpp), averaged over
/// outputs, at the best lambda of setLambdas(). Every trial draws its
/// parameters from the same seed, so two settings are compared on the same
/// random numbers. Trials report through options.progress with stage
/// "search" (layer = trial number); a false return cancels (throws Cancelled).
class ShallowTrials {
public:
    ShallowTrials(const MatrixView& inputs, const MatrixView& outputs, const FitOptions& options, Index maxRows)
        : m_options(options), m_loo(ThreadReduction(options.threads)), m_start(std::chrono::steady_clock::now())
    {
        checkTrainingData(inputs, outputs, options);
        m_x = inputs;
        m_y = outputs;
        if (inputs.rows() > maxRows) {
            Random random(options.seed ^ 0x5eed5eedULL);
            const std::vector<Index> order = shuffledRows(inputs.rows(), random);
            m_x = selectRows(inputs, order, 0, maxRows);
            m_y = selectRows(outputs, order, 0, maxRows);
        }
        m_y = OutputScaler::fromData(m_y).apply(m_y);
        m_trial = options;
        m_lambdas = {options.lambda};
        if (!m_trial.inputBox)  // scale as the full data will be scaled, not as the subset
            m_trial.inputBox = InputBox{inputs.colwise().minCoeff().transpose(),
                                        inputs.colwise().maxCoeff().transpose()};
    }

    /// The trial settings; change a field, then call score(). Only the
    /// frequency spread, width, features and input box are read.
    FitOptions& settings() { return m_trial; }

    /// Tikhonov weights each trial chooses from (default: options.lambda).
    void setLambdas(std::vector<double> lambdas) { m_lambdas = std::move(lambdas); }

    /// The lambda the last score() chose: the strongest within one standard
    /// error of its lowest error (the score itself is the lowest error).
    double bestLambda() const { return m_bestLambda; }

    /// Leave-one-out error of a shallow fit with the current settings; +inf
    /// when the solve fails (such settings are then simply not chosen).
    double score()
    {
        const Index number = m_count++;
        const double seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - m_start).count();
        if (m_options.progress &&
            !m_options.progress(FitProgress{"search", number, seconds, SamplerProgress(), -1.0, -1.0, TuneProgress()}))
            throw Cancelled("fit: cancelled by the progress callback (stage 'search', trial " + std::to_string(number) +
                            ")");
        const Matrix u = InputScaler(*m_trial.inputBox).apply(m_x);
        Random random(m_trial.seed);
        const std::vector<FeatureGroup> groups =
            GaussianSampler(m_trial.frequencyStddev)
                .sample(Shape{u.cols()}, groupShapes(m_trial.features, m_trial.width), random);
        Index count = 0;
        for (const auto& group : groups)
            count += group.featureCount();
        m_features.resize(u.rows(), count);
        layerFeatures(groups, u, Matrix(u.rows(), 0), m_features);
        double lowest = std::numeric_limits<double>::infinity();
        try {
            const std::vector<LeaveOneOutError> errors = m_loo.errors(m_features, m_y, m_lambdas);
            std::size_t best = 0;
            for (std::size_t i = 0; i < errors.size(); ++i)
                if (errors[i].relativeRmse < errors[best].relativeRmse)
                    best = i;
            lowest = errors[best].relativeRmse;
            // One-standard-error rule (Hastie, Tibshirani & Friedman, The Elements of
            // Statistical Learning, 2009, sec. 7.10): the strongest lambda whose error
            // is within one standard error of the lowest.
            m_bestLambda = m_lambdas[best];
            for (std::size_t i = 0; i < errors.size(); ++i)
                if (m_lambdas[i] > m_bestLambda && errors[i].relativeRmse <= lowest + errors[best].standardError)
                    m_bestLambda = m_lambdas[i];
        } catch (const NumericalError&) {
        }
        return lowest;
    }

    /// The value of `grid` with the lowest score after `set(value)`; leaves
    /// the settings at the best value. Ties keep the earlier value.
    template <class T, class Set>
    T best(const std::vector<T>& grid, Set set, double* bestError = nullptr)
    {
        T chosen = grid.front();
        double lowest = std::numeric_limits<double>::infinity();
        double lambda = m_lambdas.front();
        for (const T& value : grid) {
            set(m_trial, value);
            const double error = score();
            if (error < lowest) {
                lowest = error;
                chosen = value;
                lambda = m_bestLambda;
            }
        }
        set(m_trial, chosen);
        m_bestLambda = lambda;
        if (bestError)
            *bestError = lowest;
        return chosen;
    }

private:
    /// What GaussianSampler asks of a problem: parameter row lengths.
    struct Shape {
        Index inputs;
        Index parameterSize(const GroupShape& shape) const { return wavestack::parameterSize(shape.kind, inputs); }
    };

    FitOptions m_options, m_trial;
    RidgeLeaveOneOut<ThreadReduction> m_loo;
    Matrix m_x, m_y, m_features;
    std::vector<double> m_lambdas;
    double m_bestLambda = 0.0;
    std::chrono::steady_clock::time_point m_start;
    Index m_count = 0;
};

}  // namespace detail

/// The Gaussian frequency spread (FitOptions::frequencyStddev) with the
/// lowest leave-one-out relative RMSE, averaged over outputs, of shallow
/// Gaussian-sampled fits with `options`' width, features and lambda, over
/// frequencyStddevGrid() (inputs scaled to [-1, 1]).
///
/// Why it is needed: the best spread depends on the target by orders of
/// magnitude. With 1 600 borehole rows (8 inputs) and width 200, spread 0.15
/// gave held-out relative RMSE 3.6e-3, the library default 3 gave 1.1 (the
/// default suits oscillatory targets such as Ishigami). A shallow fit is the
/// cheap proxy; deeper layers and the Metropolis chain then start from it.
///
/// At most `maxRows` rows (a seeded random subset) are used, so the search
/// costs a bounded multiple of one layer's solve. Each trial reports through
/// options.progress with stage "search" (layer = trial index); a false
/// return cancels (throws Cancelled).
inline double chooseFrequencyStddev(const MatrixView& inputs, const MatrixView& outputs, const FitOptions& options,
                                    Index maxRows = 4000)
{
    detail::ShallowTrials trials(inputs, outputs, options, maxRows);
    return trials.best(frequencyStddevGrid(), [](FitOptions& o, double s) { o.frequencyStddev = s; });
}

}  // namespace wavestack
